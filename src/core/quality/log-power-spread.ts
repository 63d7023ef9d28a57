/**
 * The sampling spread of an epoch's log10 band power: how much log10 of a Welch band power
 * scatters between epochs of a stationary Gaussian signal, from the estimator alone (pure).
 *
 * One Welch bin of one epoch is P̂_k ≈ S_k·χ²_ν/ν (Welch 1967; Percival & Walden 1993, §6.17).
 * Neighbouring bins are correlated through the window, and segments through their overlap. For
 * K segments x_i[n] = x[n + iS] of a locally white signal, the Fourier coefficients obey
 *   E[X_i(k)·X_l(j)*] ∝ W_d(k − j),  W_d(q) = Σ_n w[n]·w[n + dS]·e^{−2πiqn/N},  d = i − l,
 * and for Gaussian coefficients Cov(|A|², |B|²) = |E[A·B*]|² (bins away from DC and Nyquist), so
 *   C(q) = Cov(P̂_k, P̂_{k+q}) / (S_k·S_{k+q}) = (1/K²) Σ_{d=−(K−1)}^{K−1} (K − |d|)·|W_d(q)|² / (Σ_n w[n]²)²
 * (derivation here; C(0) = 2/ν with ν of stage-average.ts, Welch 1967). The mean density over
 * bins a…b (bands.ts 'mean') then has relative variance
 *   v = Σ_k Σ_j S_k·S_j·C(|k − j|) / (Σ_k S_k)²
 * and equivalent degrees of freedom ν_band = 2/v (Satterthwaite 1946, the same matching of two
 * moments Welch 1967 uses for ν). For P̂ = S·χ²_ν/ν, Var(ln P̂) = ψ'(ν/2) exactly (the log of a
 * gamma variable), so
 *   sd(log10 P̂_band) = sqrt(ψ'(ν_band/2)) / ln 10      (≈ sqrt(2/ν_band)/ln 10 for large ν_band).
 * The shape S_k is taken from the data: the median over a stage's epochs of each bin (a common
 * factor cancels in v). Checked against scipy.signal.welch on simulated noise in the tests.
 */
import trigamma from '@stdlib/math-base-special-trigamma';
import { medianInPlace } from '../stats/median.ts';
import { bandBins } from '../spectrum/bands.ts';
import { hannWindow } from '../spectrum/stage-average.ts';
import type { OutlierFloors, RejectionOptions } from './epoch-rejection.ts';

/** Bin lags kept in C(q): beyond 8 bins the Hann window's C(q) is below 1e-6 of C(0) (checked in the tests). */
export const BIN_COVARIANCE_LAGS = 8;

/**
 * C(q), q = 0 … maxLag: relative covariance of Welch bins q apart, for nSegments segments of the
 * window taken every `step` samples (formula above).
 */
export function welchBinCovariance(window: ArrayLike<number>, step: number, nSegments: number, maxLag = BIN_COVARIANCE_LAGS): Float64Array {
  const N = window.length;
  const K = nSegments;
  if (!(K >= 1) || !Number.isInteger(K)) throw new Error(`invalid segment count: ${K}`);
  if (!(step >= 1) || !Number.isInteger(step)) throw new Error(`invalid segment step: ${step}`);
  let energy = 0;
  for (let n = 0; n < N; n++) energy += window[n] * window[n];
  const c = new Float64Array(maxLag + 1);
  for (let d = 0; d < K && d * step < N; d++) {
    const weight = d === 0 ? K : 2 * (K - d); // lags d and −d have the same |W_d(q)|
    for (let q = 0; q <= maxLag; q++) {
      // W_d(q) = Σ_n w[n]·w[n + dS]·e^{−2πiqn/N}
      let re = 0;
      let im = 0;
      for (let n = 0; n + d * step < N; n++) {
        const p = window[n] * window[n + d * step];
        const phase = (2 * Math.PI * ((q * n) % N)) / N;
        re += p * Math.cos(phase);
        im -= p * Math.sin(phase);
      }
      c[q] += (weight * (re * re + im * im)) / (energy * energy);
    }
  }
  for (let q = 0; q <= maxLag; q++) c[q] /= K * K;
  return c;
}

const hannCache = new Map<string, Float64Array>();

/** welchBinCovariance of the periodic Hann window welch.ts uses, computed once per (nPerSeg, step, nSegments). */
export function hannBinCovariance(nPerSeg: number, step: number, nSegments: number): Float64Array {
  const key = `${nPerSeg}|${step}|${nSegments}`;
  let c = hannCache.get(key);
  if (!c) hannCache.set(key, (c = welchBinCovariance(hannWindow(nPerSeg), step, nSegments)));
  return c;
}

/** Relative variance v of the mean density over shape[first … last] (formula above); cov from welchBinCovariance. */
export function bandRelativeVariance(shape: ArrayLike<number>, first: number, last: number, cov: ArrayLike<number>): number {
  if (!(first >= 0 && last >= first && last < shape.length)) throw new Error(`invalid bin range ${first}–${last} of ${shape.length} bins`);
  let total = 0;
  let sum = 0;
  for (let k = first; k <= last; k++) {
    total += shape[k];
    // Σ_j S_k·S_j·C(|k − j|) over j within the band and within the lags kept
    let row = 0;
    for (let j = Math.max(first, k - cov.length + 1); j <= Math.min(last, k + cov.length - 1); j++) row += shape[j] * cov[Math.abs(k - j)];
    sum += shape[k] * row;
  }
  if (!(total > 0)) throw new Error(`band power ${total} is not positive over bins ${first}–${last}`);
  return sum / (total * total);
}

/** sd of log10 of a power with relative variance v: sqrt(ψ'(ν/2))/ln 10, ν = 2/v (formula above). */
export function log10PowerSd(relativeVariance: number): number {
  if (!(relativeVariance > 0)) throw new Error(`invalid relative variance: ${relativeVariance}`);
  return Math.sqrt(trigamma(1 / relativeVariance)) / Math.LN10;
}

/**
 * Sampling sd of log10 band power over bins first…last for the epochs `rows` of per-epoch spectra
 * (row e = spectra[e·nBins …], µV²/Hz), the band's shape taken as the median of each bin over
 * those epochs. NaN for no rows.
 */
export function stageLogPowerSd(spectra: Float32Array, nBins: number, rows: ArrayLike<number>, first: number, last: number, cov: ArrayLike<number>): number {
  const n = rows.length;
  if (n === 0) return NaN;
  const shape = new Float64Array(nBins);
  const column = new Float64Array(n);
  for (let k = first; k <= last; k++) {
    for (let i = 0; i < n; i++) column[i] = spectra[rows[i] * nBins + k];
    shape[k] = medianInPlace(column);
  }
  return log10PowerSd(bandRelativeVariance(shape, first, last, cov));
}

/**
 * The floors of the outlier rule for one channel: σ_s of log10 broadband and muscle-range power
 * per group index 0 … nGroups − 1, over the eligible epochs of each group (per-epoch spectra from
 * 0 Hz in steps of freqStepHz, nBins per epoch). A range reaching past the stored spectrum uses
 * its stored part; a group without epochs, or a range with no stored bin, gets NaN (no floor).
 */
export function samplingFloors(
  spectra: Float32Array,
  nBins: number,
  freqStepHz: number,
  group: ArrayLike<number>,
  eligible: ArrayLike<number>,
  nGroups: number,
  ranges: Pick<RejectionOptions, 'broadbandHz' | 'muscleHz'>,
  cov: ArrayLike<number>,
): OutlierFloors {
  const rows: number[][] = Array.from({ length: nGroups }, () => []);
  for (let e = 0; e < group.length; e++) if (eligible[e] && group[e] >= 0 && group[e] < nGroups) rows[group[e]].push(e);
  const floorsOf = ([loHz, hiHz]: [number, number]) => {
    const bins = bandBins({ name: 'outlier range', loHz, hiHz }, 0, freqStepHz, nBins);
    return Float64Array.from(rows, (r) => (bins ? stageLogPowerSd(spectra, nBins, r, bins.first, bins.last, cov) : NaN));
  };
  return { broadband: floorsOf(ranges.broadbandHz), muscle: floorsOf(ranges.muscleHz) };
}
