import FFT from 'fft.js';
import { Random } from '../../src/core/stats/random.ts';

/**
 * 1/f^χ noise by spectral synthesis (e.g. Timmer & König 1995, Astron. Astrophys. 300:707–710):
 * Fourier coefficients with independent normal real and imaginary parts of standard deviation
 * ∝ f^(−χ/2), zero at DC, Hermitian-completed and inverse transformed. n must be a power of two.
 * The result is scaled to the given RMS (µV).
 */
export function powerLawNoise(n: number, fsHz: number, exponent: number, rmsUv: number, seed: number): Float64Array {
  const rng = new Random(seed);
  const fft = new FFT(n);
  const spectrum = fft.createComplexArray() as number[];
  for (let k = 1; k <= n / 2; k++) {
    const a = Math.pow((k * fsHz) / n, -exponent / 2);
    spectrum[2 * k] = a * rng.normal();
    spectrum[2 * k + 1] = k === n / 2 ? 0 : a * rng.normal();
  }
  fft.completeSpectrum(spectrum);
  const out = fft.createComplexArray() as number[];
  fft.inverseTransform(out, spectrum);
  const x = new Float64Array(n);
  let ss = 0;
  for (let i = 0; i < n; i++) {
    x[i] = out[2 * i];
    ss += x[i] * x[i];
  }
  const scale = rmsUv / Math.sqrt(ss / n);
  for (let i = 0; i < n; i++) x[i] *= scale;
  return x;
}
