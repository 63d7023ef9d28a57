import FFT from 'fft.js';

/**
 * Squared magnitudes |X_k|² (k = 0 … ⌊n/2⌋) of the discrete Fourier transform of a real
 * sequence of any length n. Power-of-two lengths use fft.js's real transform directly; other
 * lengths (a 4-s segment at 250 Hz is 1000 samples) use Bluestein's chirp-z algorithm
 * (Bluestein 1970) on power-of-two fft.js transforms, so bins stay at exactly k·fs/n.
 * Instances own their buffers: create one per segment length and reuse it.
 */
export class RealFftPower {
  readonly n: number;
  readonly nOut: number;
  private readonly direct: boolean;
  private readonly fft: FFT;
  private readonly spectrum: number[];
  // Bluestein only: chirp w_m = exp(−iπm²/n), the transformed conjugate chirp, and work buffers.
  private readonly chirpRe: Float64Array;
  private readonly chirpIm: Float64Array;
  private readonly chirpFft: number[];
  private readonly work: number[];
  private readonly pair: number[];

  constructor(n: number) {
    if (!Number.isInteger(n) || n < 2) throw new Error(`invalid FFT length: ${n}`);
    this.n = n;
    this.nOut = Math.floor(n / 2) + 1;
    this.direct = (n & (n - 1)) === 0;
    const m = this.direct ? n : nextPowerOfTwo(2 * n - 1);
    this.fft = new FFT(m);
    this.spectrum = this.fft.createComplexArray();
    this.work = this.fft.createComplexArray();
    this.pair = new Array<number>(2 * n).fill(0);
    this.chirpRe = new Float64Array(this.direct ? 0 : n);
    this.chirpIm = new Float64Array(this.direct ? 0 : n);
    this.chirpFft = this.direct ? [] : this.fft.createComplexArray();
    if (!this.direct) this.prepareChirp(m);
  }

  private prepareChirp(m: number): void {
    const n = this.n;
    for (let k = 0; k < n; k++) {
      // w_k = exp(−iπk²/n); k² mod 2n keeps the angle small and exact for large k
      const angle = (Math.PI * ((k * k) % (2 * n))) / n;
      this.chirpRe[k] = Math.cos(angle);
      this.chirpIm[k] = -Math.sin(angle);
    }
    // b_m = conj(w_m) for m = −(n−1) … n−1, laid out circularly over length m
    const b = this.work;
    b.fill(0);
    for (let k = 0; k < n; k++) {
      b[2 * k] = this.chirpRe[k];
      b[2 * k + 1] = -this.chirpIm[k];
      if (k > 0) {
        b[2 * (m - k)] = this.chirpRe[k];
        b[2 * (m - k) + 1] = -this.chirpIm[k];
      }
    }
    this.fft.transform(this.chirpFft, b);
  }

  /** Writes |X_k|² for k = 0 … ⌊n/2⌋ of x[0 … n−1] into out. */
  power(x: ArrayLike<number>, out: Float64Array): void {
    if (this.direct) {
      this.fft.realTransform(this.spectrum, x);
      const s = this.spectrum;
      for (let k = 0; k < this.nOut; k++) out[k] = s[2 * k] * s[2 * k] + s[2 * k + 1] * s[2 * k + 1];
      return;
    }
    // Bluestein: X_k = w_k · Σ_j (x_j w_j) · conj(w_{k−j}); |w_k| = 1, so |X_k|² = |conv_k|²
    const a = this.work;
    const n = this.n;
    a.fill(0);
    for (let j = 0; j < n; j++) {
      a[2 * j] = x[j] * this.chirpRe[j];
      a[2 * j + 1] = x[j] * this.chirpIm[j];
    }
    this.convolveWithChirp();
    for (let k = 0; k < this.nOut; k++) out[k] = a[2 * k] * a[2 * k] + a[2 * k + 1] * a[2 * k + 1];
  }

  /** Bluestein's convolution in place: work ← work ⊛ conj(w), by FFT, product with the transformed chirp, inverse FFT. */
  private convolveWithChirp(): void {
    const a = this.work;
    const s = this.spectrum;
    this.fft.transform(s, a);
    const b = this.chirpFft;
    for (let i = 0; i < s.length; i += 2) {
      const re = s[i] * b[i] - s[i + 1] * b[i + 1];
      const im = s[i] * b[i + 1] + s[i + 1] * b[i];
      s[i] = re;
      s[i + 1] = im;
    }
    this.fft.inverseTransform(a, s);
  }

  /**
   * The buffer to fill before pairTransform: two real sequences a, b of length n interleaved as
   * one complex sequence z = a + i·b (z[2j] = a_j, z[2j+1] = b_j).
   */
  pairInput(): number[] {
    return this.pair;
  }

  /**
   * The full DFT Z_k, k = 0 … n−1 (interleaved re, im), of the complex sequence in pairInput().
   * One complex transform serves two real sequences: A_k = (Z_k + conj Z_{n−k})/2 and
   * B_k = (Z_k − conj Z_{n−k})/2i, hence |A_k|² + |B_k|² = (|Z_k|² + |Z_{n−k}|²)/2 (the
   * two-for-one real FFT; Cooley, Lewis & Welch 1970). The returned array is reused.
   */
  pairTransform(): number[] {
    const z = this.pair;
    if (this.direct) {
      this.fft.transform(this.spectrum, z);
      return this.spectrum;
    }
    // Bluestein on complex input: Z_k = w_k · ((z·w) ⊛ conj(w))_k
    const n = this.n;
    const a = this.work;
    a.fill(0);
    for (let j = 0; j < n; j++) {
      const re = z[2 * j];
      const im = z[2 * j + 1];
      a[2 * j] = re * this.chirpRe[j] - im * this.chirpIm[j];
      a[2 * j + 1] = re * this.chirpIm[j] + im * this.chirpRe[j];
    }
    this.convolveWithChirp();
    for (let k = 0; k < n; k++) {
      const re = a[2 * k];
      const im = a[2 * k + 1];
      a[2 * k] = re * this.chirpRe[k] - im * this.chirpIm[k];
      a[2 * k + 1] = re * this.chirpIm[k] + im * this.chirpRe[k];
    }
    return a;
  }
}

function nextPowerOfTwo(v: number): number {
  let p = 1;
  while (p < v) p *= 2;
  return p;
}
