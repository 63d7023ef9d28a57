import { RealFftPower } from './real-fft.ts';
import { slepianTapers, type SlepianTapers } from './dpss.ts';
import { addOneSided, addPairPower } from './pair-power.ts';

/**
 * The multitaper power spectral density (Thomson 1982, Proc. IEEE 70:1055–1096; Percival &
 * Walden 1993, "Spectral Analysis for Physical Applications", ch. 7), on the same segments and
 * frequency grid as welch.ts, so the two estimates can be swapped bin for bin:
 *
 *   per segment (mean removed): S_k(f) = |Σ_n v_k[n] x[n] e^{−2πifn/fs}|² / fs   (unit-energy taper v_k)
 *   segment estimate: Ŝ(f) = (1/K) Σ_{k<K} S_k(f)   (equal weights; Thomson's adaptive weights are not used)
 *   one-sided: doubled except DC and Nyquist; segments averaged by their mean, as Welch.
 *
 * v_0 … v_{K−1} are the Slepian tapers of the segment's N samples with time-half-bandwidth NW
 * (dpss.ts), K = 2NW − 1 by default. Each eigenspectrum smooths the true spectrum over ±W with
 * W = NW/T (T = segment length in s): frequency resolution 2W = 2NW/T Hz (1 Hz for NW = 2 and
 * 4-s segments). With the input in µV and fs in Hz the result is in µV²/Hz.
 *
 * Equal weights keep every bin's sampling distribution the same — ≈ S(f)·χ²_{2K}/2K per segment
 * for Gaussian data (Percival & Walden 1993, ch. 7; from memory, checked numerically in the
 * tests) — so one degrees-of-freedom figure (taperDegreesOfFreedom) serves the median average of
 * every bin; adaptive weights would make it differ from bin to bin.
 *
 * Cost: K real transforms per segment, done two at a time through one complex transform (the
 * two-for-one real FFT, RealFftPower.pairTransform), so ⌈K·S/2⌉ complex transforms per epoch of
 * S segments against Welch's ⌈S/2⌉; the tapers, transform plan and buffers are made once.
 */
export interface MultitaperOptions {
  /** Segment length in s (default 4), as Welch's. */
  segmentS?: number;
  /** Overlap between segments as a fraction of the segment (default 0.5), as Welch's. */
  overlap?: number;
  /** Time-half-bandwidth product NW (default 2). */
  nw?: number;
  /** Number of tapers K (default 2NW − 1, at least 1). */
  k?: number;
  /** Highest frequency kept, Hz (default: Nyquist). */
  maxFreqHz?: number;
}

/** Default K for a time-half-bandwidth NW: 2NW − 1, the tapers with concentration near 1 (Percival & Walden 1993, ch. 8). */
export function defaultTaperCount(nw: number): number {
  return Math.max(1, Math.floor(2 * nw) - 1);
}

export class Multitaper {
  readonly fsHz: number;
  readonly segmentS: number;
  readonly nPerSeg: number;
  readonly nOverlap: number;
  readonly step: number;
  readonly freqStepHz: number;
  readonly nBins: number;
  readonly nw: number;
  readonly k: number;
  /** Half the frequency resolution, Hz: W = NW/T. */
  readonly halfBandwidthHz: number;
  readonly slepian: SlepianTapers;
  private readonly scale: number;
  private readonly fft: RealFftPower;
  private readonly raw: Float64Array;
  private means: Float64Array;

  constructor(fsHz: number, options: MultitaperOptions = {}) {
    const segmentS = options.segmentS ?? 4;
    const overlap = options.overlap ?? 0.5;
    const nw = options.nw ?? 2;
    const k = options.k ?? defaultTaperCount(nw);
    if (!(fsHz > 0)) throw new Error(`invalid sampling rate: ${fsHz} Hz`);
    if (!(segmentS > 0)) throw new Error(`invalid segment length: ${segmentS} s`);
    if (!(overlap >= 0 && overlap < 1)) throw new Error(`invalid overlap: ${overlap} (must be in [0, 1))`);
    const n = Math.round(segmentS * fsHz);
    if (Math.abs(n - segmentS * fsHz) > 1e-6 || n < 2) throw new Error(`segment of ${segmentS} s at ${fsHz} Hz is not a whole number of samples`);
    if (!(nw >= 1 && nw < n / 2)) throw new Error(`invalid time-half-bandwidth NW: ${nw} (at least 1, below ${n / 2} for ${n}-sample segments)`);
    if (!(Number.isInteger(k) && k >= 1 && k <= 2 * nw)) throw new Error(`invalid number of tapers K: ${k} (a whole number from 1 to 2NW = ${2 * nw})`);
    this.fsHz = fsHz;
    this.segmentS = segmentS;
    this.nPerSeg = n;
    this.nOverlap = Math.round(overlap * n);
    this.step = n - this.nOverlap;
    this.freqStepHz = fsHz / n;
    const nOneSided = Math.floor(n / 2) + 1;
    const maxFreqHz = options.maxFreqHz ?? fsHz / 2;
    if (!(maxFreqHz >= 0)) throw new Error(`invalid maximum frequency: ${maxFreqHz} Hz`);
    this.nBins = Math.min(nOneSided, Math.floor(maxFreqHz / this.freqStepHz + 1e-9) + 1);
    this.nw = nw;
    this.k = k;
    this.halfBandwidthHz = nw / segmentS;
    this.slepian = slepianTapers(n, nw, k);
    this.scale = 1 / (fsHz * k); // density of unit-energy tapers, 1/fs, and the mean over K tapers
    this.fft = new RealFftPower(n);
    this.raw = new Float64Array(this.nBins);
    this.means = new Float64Array(16);
  }

  /** Frequencies of the output bins, Hz. */
  frequencies(): Float64Array {
    const f = new Float64Array(this.nBins);
    for (let i = 0; i < this.nBins; i++) f[i] = i * this.freqStepHz;
    return f;
  }

  /** Segments that fit in `length` samples, as Welch: ⌊(length − nPerSeg)/step⌋ + 1. */
  segmentCount(length: number): number {
    return length < this.nPerSeg ? 0 : Math.floor((length - this.nPerSeg) / this.step) + 1;
  }

  /**
   * Adds each segment's multitaper density into sum (length nBins); returns the number of
   * segments. The K·S (segment, taper) products go through the complex transform two at a time.
   */
  accumulate(x: ArrayLike<number>, start: number, length: number, sum: Float64Array): number {
    const count = this.segmentCount(length);
    const n = this.nPerSeg;
    const K = this.k;
    const tapers = this.slepian.tapers;
    if (this.means.length < count) this.means = new Float64Array(count);
    const means = this.means;
    for (let s = 0; s < count; s++) {
      // detrend 'constant': the segment mean, removed before tapering
      const o = start + s * this.step;
      let m = 0;
      for (let i = 0; i < n; i++) m += x[o + i];
      means[s] = m / n;
    }
    const z = this.fft.pairInput();
    const raw = this.raw;
    raw.fill(0);
    const jobs = count * K;
    for (let j = 0; j < jobs; j += 2) {
      const sa = Math.floor(j / K);
      const oa = start + sa * this.step;
      const va = tapers[j % K];
      const ma = means[sa];
      if (j + 1 < jobs) {
        const sb = Math.floor((j + 1) / K);
        const ob = start + sb * this.step;
        const vb = tapers[(j + 1) % K];
        const mb = means[sb];
        for (let i = 0; i < n; i++) {
          z[2 * i] = (x[oa + i] - ma) * va[i];
          z[2 * i + 1] = (x[ob + i] - mb) * vb[i];
        }
      } else {
        for (let i = 0; i < n; i++) {
          z[2 * i] = (x[oa + i] - ma) * va[i];
          z[2 * i + 1] = 0;
        }
      }
      const y = this.fft.pairTransform();
      addPairPower(y, n, this.nBins, raw);
    }
    addOneSided(raw, this.scale, n, this.nBins, sum);
    return count;
  }

  /** Mean multitaper density over the segments of x[start … start+length) into out. Returns the count. */
  mean(x: ArrayLike<number>, start: number, length: number, out: Float64Array): number {
    out.fill(0);
    const count = this.accumulate(x, start, length, out);
    if (count > 0) for (let b = 0; b < this.nBins; b++) out[b] /= count;
    return count;
  }
}

/** Multitaper PSD of a whole signal, segments averaged by their mean (as welch() with average 'mean'). */
export function multitaper(
  x: ArrayLike<number>,
  fsHz: number,
  options: MultitaperOptions = {},
): { freqsHz: Float64Array; psd: Float64Array; nSegments: number } {
  const est = new Multitaper(fsHz, options);
  const psd = new Float64Array(est.nBins);
  const nSegments = est.mean(x, 0, x.length, psd);
  if (nSegments === 0) throw new Error(`signal of ${x.length} samples is shorter than one segment (${est.nPerSeg})`);
  return { freqsHz: est.frequencies(), psd, nSegments };
}
