/**
 * Averaging the per-epoch Welch spectra of one stage's clean epochs (pure).
 *
 * Per-epoch spectra are held as one Float32Array, row e = epoch e (nBins values, µV²/Hz): each
 * row is already the mean of the K Welch segments of that epoch. Keeping every segment of an
 * 8-h, 64-channel night instead would cost ~600 MB, so the median is taken across epochs:
 *
 *   median average = median_e(P_e(f)) / b(ν),   b(ν) = median(χ²_ν)/ν ≈ (1 − 2/(9ν))³
 *
 * For Gaussian data an epoch's Welch estimate is ≈ P(f)·χ²_ν/ν (Welch 1967; Percival & Walden
 * 1993, "Spectral Analysis for Physical Applications", §6.17), with the equivalent degrees of
 * freedom computed from the window's overlap correlation ρ(m):
 *
 *   ν = 2K / (1 + 2 Σ_{m=1}^{K−1} (1 − m/K) ρ(m)²),  ρ(m) = Σ_n w[n]·w[n + mS] / Σ_n w[n]²
 *
 * (S the segment step; the formula is from memory of those texts and is checked numerically in
 * the tests: the variance of white-noise epoch estimates equals 2/ν). The median of χ²_ν/ν is
 * approximated by Wilson & Hilferty (1931): (1 − 2/(9ν))³, checked against scipy.stats.chi2.
 * The DC and Nyquist bins have half the degrees of freedom; their correction uses the same ν
 * (DC is ~0 after per-segment mean removal, and Nyquist lies above the stored range).
 */
import { medianInPlace } from '../stats/median.ts';

/** Overlap correlation ρ(m) = Σ w[n]·w[n + m·step] / Σ w² of a window. */
export function overlapCorrelation(window: ArrayLike<number>, step: number, m: number): number {
  let num = 0;
  let den = 0;
  const shift = m * step;
  for (let n = 0; n < window.length; n++) {
    den += window[n] * window[n];
    if (n + shift < window.length) num += window[n] * window[n + shift];
  }
  return num / den;
}

/** Periodic Hann window w[n] = 0.5 − 0.5·cos(2πn/N), as in welch.ts. */
export function hannWindow(n: number): Float64Array {
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) w[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
  return w;
}

/** Equivalent degrees of freedom ν of a Welch estimate from K segments (formula above). */
export function welchDegreesOfFreedom(nSegments: number, window: ArrayLike<number>, step: number): number {
  const K = nSegments;
  if (!(K >= 1) || !Number.isInteger(K)) throw new Error(`invalid segment count: ${K}`);
  let s = 0;
  for (let m = 1; m < K; m++) {
    const rho = overlapCorrelation(window, step, m);
    s += (1 - m / K) * rho * rho;
  }
  return (2 * K) / (1 + 2 * s);
}

/**
 * Equivalent degrees of freedom of the mean of S segment estimates, each the equally weighted
 * mean of K eigenspectra with unit-energy tapers v_0 … v_{K−1} (multitaper.ts; K = 1 and a
 * normalised window is Welch's case above):
 *
 *   ν = 2KS / (1 + 2 Σ_{m=1}^{S−1} (1 − m/S) ρ(m)),  ρ(m) = (1/K) Σ_j Σ_k (Σ_n v_j[n + m·step] v_k[n])²
 *
 * One segment has 2K degrees of freedom (K independent eigenspectra of 2 each for Gaussian data
 * away from DC and Nyquist; Percival & Walden 1993, ch. 7, from memory); ρ(m) is the correlation
 * of two segments m steps apart, Cov(|J_j|², |J_k|²) = |E J_j J_k*|² summed over the taper pairs
 * (the same argument as the Welch formula above). Checked numerically in the tests: the variance
 * of white-noise epoch estimates equals 2/ν.
 */
export function taperDegreesOfFreedom(nSegments: number, tapers: readonly ArrayLike<number>[], step: number): number {
  const S = nSegments;
  const K = tapers.length;
  if (!(S >= 1) || !Number.isInteger(S)) throw new Error(`invalid segment count: ${S}`);
  if (K < 1) throw new Error('no tapers');
  const n = tapers[0].length;
  let s = 0;
  for (let m = 1; m < S; m++) {
    const shift = m * step;
    if (shift >= n) break;
    let rho = 0;
    for (let j = 0; j < K; j++) {
      for (let k = 0; k < K; k++) {
        let c = 0;
        for (let i = 0; i + shift < n; i++) c += tapers[j][i + shift] * tapers[k][i];
        rho += c * c;
      }
    }
    s += (1 - m / S) * (rho / K);
  }
  return (2 * K * S) / (1 + 2 * s);
}

/** median(χ²_ν)/ν by Wilson–Hilferty (1931): (1 − 2/(9ν))³. */
export function chiSquareMedianRatio(nu: number): number {
  if (!(nu > 0)) throw new Error(`invalid degrees of freedom: ${nu}`);
  const a = 1 - 2 / (9 * nu);
  return a * a * a;
}

/** Mean over the selected rows: out[k] = (1/n) Σ_e P_e[k]. */
export function stageMean(spectra: Float32Array, nBins: number, rows: ArrayLike<number>, out: Float64Array): void {
  out.fill(0);
  const n = rows.length;
  for (let i = 0; i < n; i++) {
    const o = rows[i] * nBins;
    for (let k = 0; k < nBins; k++) out[k] += spectra[o + k];
  }
  for (let k = 0; k < nBins; k++) out[k] /= n;
}

/**
 * Median over the selected rows divided by the chi-square median ratio b(ν):
 * out[k] = median_e(P_e[k]) / b(ν). scratch needs length ≥ rows.length.
 */
export function stageMedian(
  spectra: Float32Array,
  nBins: number,
  rows: ArrayLike<number>,
  nu: number,
  out: Float64Array,
  scratch: Float64Array = new Float64Array(rows.length),
): void {
  const n = rows.length;
  const bias = chiSquareMedianRatio(nu);
  const col = scratch.subarray(0, n);
  for (let k = 0; k < nBins; k++) {
    for (let i = 0; i < n; i++) col[i] = spectra[rows[i] * nBins + k];
    out[k] = medianInPlace(col) / bias;
  }
}

export interface StageAverage {
  nEpochs: number;
  mean: Float64Array;
  median: Float64Array;
  /** true when fewer than minEpochs clean epochs were averaged. */
  flagged: boolean;
  flagReason: 'too-few-epochs' | null;
}

/** Default minimum of clean epochs per stage: 10 × 30 s = 5 min (common practice). */
export const DEFAULT_MIN_EPOCHS = 10;

/**
 * Mean and median average of one stage's clean epochs. Returns null for no epochs; a stage with
 * fewer than minEpochs epochs is still averaged but flagged 'too-few-epochs'.
 */
export function averageStage(spectra: Float32Array, nBins: number, rows: ArrayLike<number>, nu: number, minEpochs = DEFAULT_MIN_EPOCHS): StageAverage | null {
  if (rows.length === 0) return null;
  const mean = new Float64Array(nBins);
  const median = new Float64Array(nBins);
  stageMean(spectra, nBins, rows, mean);
  stageMedian(spectra, nBins, rows, nu, median);
  const flagged = rows.length < minEpochs;
  return { nEpochs: rows.length, mean, median, flagged, flagReason: flagged ? 'too-few-epochs' : null };
}
