import type { AperiodicParams, PeakParams } from '../../src/core/spectrum/aperiodic-model.ts';
import { simulateSpectrum } from '../../src/core/simulate/index.ts';
import { Random } from '../../src/core/stats/random.ts';

/**
 * Simulated spectra with known parameters for the fit's tests and benchmark, drawn with the
 * simulator's simulateSpectrum (model × Gamma noise of a Welch average).
 *
 * Noise of a 2-hour N2 average: 240 epochs of 30 s, each 14 Hann segments of 4 s with 50 % overlap.
 * Periodograms of overlapping segments are correlated by ρ² = (Σ w[n]·w[n+D] / Σ w[n]²)²
 * (1/36 for Hann at 50 %), and the mean of K of them has the variance of K_eff = K / (1 + 2(1 − 1/K)ρ²)
 * independent ones (Welch 1967, IEEE Trans. Audio Electroacoust. 15:70–73, eq. for the variance
 * of the averaged periodogram; only neighbours overlap at 50 %). Epochs do not share segments.
 */
export const EPOCHS_2H_N2 = 240;
export const SEGMENTS_PER_EPOCH = 14;

export function effectiveSegments(segmentsPerEpoch: number, epochs: number, nPerSeg = 1024): number {
  const w = new Float64Array(nPerSeg);
  for (let i = 0; i < nPerSeg; i++) w[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / nPerSeg);
  const d = nPerSeg / 2;
  let cross = 0;
  let sq = 0;
  for (let i = 0; i < nPerSeg; i++) sq += w[i] * w[i];
  for (let i = 0; i + d < nPerSeg; i++) cross += w[i] * w[i + d];
  const rho2 = (cross / sq) ** 2;
  const k = segmentsPerEpoch;
  return (epochs * k) / (1 + 2 * (1 - 1 / k) * rho2);
}

/** 0.25-Hz bins from 0.25 to 60 Hz (a 4-s Welch spectrum without DC). */
export function spectrumFrequencies(): Float64Array {
  return Float64Array.from({ length: 240 }, (_, i) => 0.25 * (i + 1));
}

export interface SimulatedCase {
  freqsHz: Float64Array;
  power: Float64Array;
  truth: { aperiodic: AperiodicParams; peaks: PeakParams[] };
  mode: 'power-law' | 'knee';
}

/**
 * One seeded case: exponent 0.8–2.5, offset 1–3 log10(µV²/Hz); every third case has a knee at
 * 2–8 Hz (k = f_knee^χ); 0–3 peaks with centres 4–30 Hz at least 4 Hz apart, heights 0.1–0.6
 * log10, Gaussian widths w 0.6–2 Hz.
 */
export function simulatedCase(seed: number, nAveraged: number): SimulatedCase {
  const rng = new Random(seed);
  const exponent = 0.8 + 1.7 * rng.uniform();
  const offset = 1 + 2 * rng.uniform();
  const knee = seed % 3 === 0 ? Math.pow(2 + 6 * rng.uniform(), exponent) : 0;
  const nPeaks = rng.int(4);
  const peaks: PeakParams[] = [];
  while (peaks.length < nPeaks) {
    const centerHz = 4 + 26 * rng.uniform();
    const height = 0.1 + 0.5 * rng.uniform();
    const widthHz = 0.6 + 1.4 * rng.uniform();
    if (peaks.every((p) => Math.abs(p.centerHz - centerHz) >= 4)) peaks.push({ centerHz, height, widthHz });
  }
  peaks.sort((a, b) => a.centerHz - b.centerHz);
  const truth = { aperiodic: { offset, exponent, knee }, peaks };
  const freqsHz = spectrumFrequencies();
  const power = simulateSpectrum(truth, freqsHz, nAveraged, rng);
  return { freqsHz, power, truth, mode: knee > 0 ? 'knee' : 'power-law' };
}
