/**
 * A spectrum drawn from the model with the noise of a Welch average: each bin of a periodogram
 * of Gaussian noise is the density times an exponential variable (χ² with 2 degrees of freedom,
 * over 2); the mean of n independent ones is the density times Gamma(shape n, scale 1/n)
 * (Percival & Walden 1993, Spectral Analysis for Physical Applications, §6.6). nAveraged is the
 * number of independent segments: for 50 %-overlapping Hann segments the equivalent number is
 * about 1.9 × the segment count (Welch 1967, variance ratio for that overlap; value from memory).
 * DC and Nyquist bins (χ² with 1 degree of freedom) are treated like the others.
 */
import { modelLog10, type AperiodicParams, type PeakParams } from '../spectrum/aperiodic-model.ts';
import type { Random } from '../stats/random.ts';

export interface SpectrumParams {
  aperiodic: AperiodicParams;
  peaks: readonly PeakParams[];
}

/**
 * Gamma(shape, 1) deviate by Marsaglia & Tsang (2000, ACM TOMS 26:363–372); shapes below 1 by
 * the boost Gamma(a) = Gamma(a + 1)·U^(1/a) from the same paper.
 */
export function gammaDeviate(shape: number, rng: Random): number {
  if (!(shape > 0)) throw new Error(`invalid gamma shape: ${shape}`);
  if (shape < 1) return gammaDeviate(shape + 1, rng) * Math.pow(rng.uniform(), 1 / shape);
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    let x: number;
    let v: number;
    do {
      x = rng.normal();
      v = 1 + c * x;
    } while (v <= 0);
    v = v * v * v;
    const u = rng.uniform();
    if (u < 1 - 0.0331 * x * x * x * x) return d * v;
    if (Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
  }
}

/** Density at each frequency (µV²/Hz): 10^L(f) × Gamma(n, 1/n). Frequencies must be > 0 Hz. */
export function simulateSpectrum(params: SpectrumParams, freqsHz: ArrayLike<number>, nAveraged: number, rng: Random): Float64Array {
  if (!(nAveraged >= 1)) throw new Error(`invalid number of averaged segments: ${nAveraged}`);
  for (let i = 0; i < freqsHz.length; i++) {
    if (!(freqsHz[i] > 0)) throw new Error(`frequency ${freqsHz[i]} Hz at index ${i}: the model needs f > 0`);
  }
  const log = modelLog10(freqsHz, params.aperiodic, params.peaks);
  const out = new Float64Array(freqsHz.length);
  for (let i = 0; i < out.length; i++) out[i] = Math.pow(10, log[i]) * (gammaDeviate(nAveraged, rng) / nAveraged);
  return out;
}
