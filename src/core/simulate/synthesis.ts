/**
 * Gaussian noise with a prescribed one-sided density S(f) (µV²/Hz) by spectral synthesis.
 *
 * For a real sequence x[n] = (1/N)·Σ_k X_k·e^{2πikn/N} sampled at fs, the two-sided periodogram
 * |X_k|²/(N·fs) estimates S(f_k)/2, so independent complex Gaussian bins with
 *   X_k = ½·sqrt(N·fs·S(f_k))·(a + ib),  a, b ~ N(0, 1),  0 < k < N/2,  X_{N−k} = conj(X_k),
 * (DC and Nyquist set to 0) give E|X_k|² = N·fs·S(f_k)/2, hence Var x = ∫₀^{fs/2} S(f) df and a
 * one-sided Welch density equal to S(f) in expectation (derivation here; checked against
 * scipy.signal.welch in tests/simulate). Two real signals come out of one complex inverse FFT:
 * Z = X_A + i·X_B, x_A = Re ifft(Z), x_B = Im ifft(Z) (common practice).
 * Each bin's pair (a, b) comes from Marsaglia's polar method (Marsaglia & Bray 1964, as in
 * Random.normal) on 32-bit draws: (u, v) uniform in the unit disc, (a, b) = (u, v)·√(−2 ln q / q),
 * q = u² + v²; both values of a draw are used, at under half the cost of two Random.normal()
 * calls (the draws are most of the synthesis time).
 */
import FFT from 'fft.js';
import type { Random } from '../stats/random.ts';

/** Bin amplitudes ½·sqrt(N·fs·S(f_k)) for k = 0 … N/2, nonzero only in [kLo, kHi]. */
export interface BinAmplitudes {
  amp: Float64Array;
  kLo: number;
  kHi: number;
}

const TWO_POW_M31 = 1 / 2147483648;

export class SpectralSynthesizer {
  readonly n: number;
  readonly fsHz: number;
  private readonly fft: FFT;
  private readonly spectrum: number[];
  private readonly signal: number[];
  private u = 0;
  private v = 0;

  constructor(n: number, fsHz: number) {
    if (!Number.isInteger(Math.log2(n)) || n < 4) throw new Error(`synthesis length must be a power of two ≥ 4: ${n}`);
    this.n = n;
    this.fsHz = fsHz;
    this.fft = new FFT(n);
    this.spectrum = this.fft.createComplexArray();
    this.signal = this.fft.createComplexArray();
  }

  /** Amplitudes for the density function (µV²/Hz of f in Hz), DC and Nyquist left at 0. */
  amplitudes(density: (fHz: number) => number): BinAmplitudes {
    const half = this.n / 2;
    const amp = new Float64Array(half + 1);
    const c = Math.sqrt(this.n * this.fsHz) / 2;
    let kLo = half;
    let kHi = 0;
    for (let k = 1; k < half; k++) {
      const s = density((k * this.fsHz) / this.n);
      if (!(s >= 0)) throw new Error(`density at ${(k * this.fsHz) / this.n} Hz is ${s}`);
      amp[k] = c * Math.sqrt(s);
      if (amp[k] > 0) {
        kLo = Math.min(kLo, k);
        kHi = Math.max(kHi, k);
      }
    }
    return { amp, kLo, kHi };
  }

  /** Polar method: leaves (u, v) uniform in the unit disc and returns √(−2 ln q / q). */
  private polar(rng: Random): number {
    let u: number;
    let v: number;
    let q: number;
    do {
      u = rng.nextUint32() * TWO_POW_M31 - 1;
      v = rng.nextUint32() * TWO_POW_M31 - 1;
      q = u * u + v * v;
    } while (q >= 1 || q === 0);
    this.u = u;
    this.v = v;
    return Math.sqrt((-2 * Math.log(q)) / q);
  }

  /**
   * Writes two independent realisations, with densities a and b, into outA and outB (length n).
   * b may be null (outB then untouched). Draws from rng bin by bin: a's pair, then b's pair.
   */
  pair(a: BinAmplitudes, b: BinAmplitudes | null, rng: Random, outA: Float64Array, outB: Float64Array | null): void {
    const n = this.n;
    const z = this.spectrum;
    z.fill(0);
    const lo = Math.min(a.kLo, b ? b.kLo : a.kLo);
    const hi = Math.max(a.kHi, b ? b.kHi : a.kHi);
    for (let k = lo; k <= hi; k++) {
      let aRe = 0;
      let aIm = 0;
      let bRe = 0;
      let bIm = 0;
      if (k >= a.kLo && k <= a.kHi) {
        const m = a.amp[k] * this.polar(rng);
        aRe = m * this.u;
        aIm = m * this.v;
      }
      if (b && k >= b.kLo && k <= b.kHi) {
        const m = b.amp[k] * this.polar(rng);
        bRe = m * this.u;
        bIm = m * this.v;
      }
      // Z_k = X_A + i·X_B;  Z_{N−k} = conj(X_A) + i·conj(X_B)
      z[2 * k] = aRe - bIm;
      z[2 * k + 1] = aIm + bRe;
      z[2 * (n - k)] = aRe + bIm;
      z[2 * (n - k) + 1] = -aIm + bRe;
    }
    this.fft.inverseTransform(this.signal, z); // divides by N
    const s = this.signal;
    for (let i = 0; i < n; i++) outA[i] = s[2 * i];
    if (outB) for (let i = 0; i < n; i++) outB[i] = s[2 * i + 1];
  }
}
