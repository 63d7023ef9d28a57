import { RealFftPower } from './real-fft.ts';
import { medianBias } from './median-bias.ts';
import { medianInPlace } from '../stats/median.ts';
import { addOneSided, addPairPower } from './pair-power.ts';

/**
 * Welch's averaged, modified periodogram (Welch 1967, IEEE Trans. Audio Electroacoust. 15:70–73),
 * computed the way scipy.signal.welch computes it: periodic Hann window, per-segment mean removed,
 * one-sided density scaling 1/(fs·Σw²), doubled except at DC and Nyquist. With the input in µV and
 * fs in Hz the result is in µV²/Hz. The segment length is given in seconds, so the frequency step
 * 1/segmentS is the same for every sampling rate and bins align across recordings.
 */
export interface WelchOptions {
  /** Segment length in s (default 4). segmentS·fs must be a whole number of samples. */
  segmentS?: number;
  /** Overlap between segments as a fraction of the segment, 0 ≤ overlap < 1 (default 0.5). */
  overlap?: number;
  /** Highest frequency kept, Hz (default: Nyquist). */
  maxFreqHz?: number;
}

export class Welch {
  readonly fsHz: number;
  readonly segmentS: number;
  readonly nPerSeg: number;
  readonly nOverlap: number;
  readonly step: number;
  readonly freqStepHz: number;
  /** Number of output bins, 0 … (nBins − 1)·freqStepHz. */
  readonly nBins: number;
  private readonly window: Float64Array;
  private readonly scale: number;
  private readonly fft: RealFftPower;
  private readonly buffer: Float64Array;
  private readonly full: Float64Array;
  private readonly segment: Float64Array;

  constructor(fsHz: number, options: WelchOptions = {}) {
    const segmentS = options.segmentS ?? 4;
    const overlap = options.overlap ?? 0.5;
    if (!(fsHz > 0)) throw new Error(`invalid sampling rate: ${fsHz} Hz`);
    if (!(segmentS > 0)) throw new Error(`invalid segment length: ${segmentS} s`);
    if (!(overlap >= 0 && overlap < 1)) throw new Error(`invalid overlap: ${overlap} (must be in [0, 1))`);
    const n = Math.round(segmentS * fsHz);
    if (Math.abs(n - segmentS * fsHz) > 1e-6 || n < 2) {
      throw new Error(`segment of ${segmentS} s at ${fsHz} Hz is not a whole number of samples`);
    }
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
    this.window = new Float64Array(n);
    let sumW2 = 0;
    for (let i = 0; i < n; i++) {
      // periodic Hann: w[i] = 0.5 − 0.5·cos(2πi/N) (scipy.signal.get_window('hann', N))
      const w = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
      this.window[i] = w;
      sumW2 += w * w;
    }
    this.scale = 1 / (fsHz * sumW2); // density scaling 1/(fs·Σw²)
    this.fft = new RealFftPower(n);
    this.buffer = new Float64Array(n);
    this.full = new Float64Array(nOneSided);
    this.segment = new Float64Array(this.nBins);
  }

  /** Frequencies of the output bins, Hz. */
  frequencies(): Float64Array {
    const f = new Float64Array(this.nBins);
    for (let k = 0; k < this.nBins; k++) f[k] = k * this.freqStepHz;
    return f;
  }

  /** Segments that fit in `length` samples: ⌊(length − nPerSeg)/step⌋ + 1, trailing part dropped. */
  segmentCount(length: number): number {
    return length < this.nPerSeg ? 0 : Math.floor((length - this.nPerSeg) / this.step) + 1;
  }

  /**
   * Calls onSegment with the one-sided density of each segment of x[start … start+length).
   * The array handed out is reused for the next segment. Returns the number of segments.
   */
  forEachSegment(x: ArrayLike<number>, start: number, length: number, onSegment: (psd: Float64Array, index: number) => void): number {
    const count = this.segmentCount(length);
    const n = this.nPerSeg;
    const buf = this.buffer;
    const full = this.full;
    const out = this.segment;
    for (let s = 0; s < count; s++) {
      const o = start + s * this.step;
      let mean = 0;
      for (let i = 0; i < n; i++) mean += x[o + i];
      mean /= n; // detrend 'constant': remove the segment mean
      for (let i = 0; i < n; i++) buf[i] = (x[o + i] - mean) * this.window[i];
      this.fft.power(buf, full);
      out.fill(0);
      addOneSided(full, this.scale, n, this.nBins, out);
      onSegment(out, s);
    }
    return count;
  }

  /**
   * Adds each segment's density into sum (length nBins). Returns the number of segments.
   * The same estimate as forEachSegment, formed with less work: segments go through one complex
   * transform in pairs (RealFftPower.pairTransform), an odd last one paired with zeros, windowed
   * as they are copied in; the segment mean is removed afterwards in frequency, where it touches
   * three bins only: FFT((x − m)·w) = FFT(x·w) − m·W, and the periodic Hann window's transform W
   * is n/2 at bin 0, −n/4 at bins 1 and n − 1, and 0 elsewhere (Harris 1978, Proc. IEEE 66:51–83).
   */
  accumulate(x: ArrayLike<number>, start: number, length: number, sum: Float64Array): number {
    const count = this.segmentCount(length);
    const n = this.nPerSeg;
    const w = this.window;
    const z = this.fft.pairInput();
    const raw = this.segment;
    raw.fill(0);
    for (let s = 0; s < count; s += 2) {
      const oa = start + s * this.step;
      const ob = oa + this.step;
      let sa = 0;
      let sb = 0;
      if (s + 1 < count) {
        for (let i = 0; i < n; i++) {
          const a = x[oa + i];
          const b = x[ob + i];
          sa += a;
          sb += b;
          z[2 * i] = a * w[i];
          z[2 * i + 1] = b * w[i];
        }
      } else {
        for (let i = 0; i < n; i++) {
          const a = x[oa + i];
          sa += a;
          z[2 * i] = a * w[i];
          z[2 * i + 1] = 0;
        }
      }
      const y = this.fft.pairTransform();
      // detrend 'constant': Z_k −= (m_a + i·m_b)·W_k at k = 0, 1, n − 1
      const ma = sa / n;
      const mb = sb / n;
      y[0] -= ma * (n / 2);
      y[1] -= mb * (n / 2);
      y[2] += ma * (n / 4);
      y[3] += mb * (n / 4);
      y[2 * n - 2] += ma * (n / 4);
      y[2 * n - 1] += mb * (n / 4);
      addPairPower(y, n, this.nBins, raw);
    }
    addOneSided(raw, this.scale, n, this.nBins, sum);
    return count;
  }

  /** Mean density over the segments of x[start … start+length) into out. Returns the count. */
  mean(x: ArrayLike<number>, start: number, length: number, out: Float64Array): number {
    out.fill(0);
    const count = this.accumulate(x, start, length, out);
    if (count > 0) for (let k = 0; k < this.nBins; k++) out[k] /= count;
    return count;
  }
}

export interface WelchResult {
  freqsHz: Float64Array;
  /** One-sided power spectral density, (input unit)²/Hz. */
  psd: Float64Array;
  nSegments: number;
}

/**
 * Welch PSD of a whole signal, averaged over segments by mean, or by median divided by the
 * median bias (as scipy.signal.welch with average='median').
 */
export function welch(x: ArrayLike<number>, fsHz: number, options: WelchOptions & { average?: 'mean' | 'median' } = {}): WelchResult {
  const est = new Welch(fsHz, options);
  const psd = new Float64Array(est.nBins);
  let nSegments: number;
  if ((options.average ?? 'mean') === 'mean') {
    nSegments = est.mean(x, 0, x.length, psd);
  } else {
    const segments: Float64Array[] = [];
    nSegments = est.forEachSegment(x, 0, x.length, (p) => segments.push(Float64Array.from(p)));
    const column = new Float64Array(nSegments);
    const bias = medianBias(nSegments);
    for (let k = 0; k < est.nBins; k++) {
      for (let s = 0; s < nSegments; s++) column[s] = segments[s][k];
      psd[k] = median(column) / bias;
    }
  }
  if (nSegments === 0) throw new Error(`signal of ${x.length} samples is shorter than one segment (${est.nPerSeg})`);
  return { freqsHz: est.frequencies(), psd, nSegments };
}

/** Median of the values (on a copy; the mean of the two middle values for even counts). */
export function median(values: ArrayLike<number>): number {
  return medianInPlace(Float64Array.from(values));
}
