import { SpectrumFitError } from './fit-error.ts';
import { fitPowerLawLine } from './power-law-line.ts';
import { rationalFactor, resamplePoly } from './resample.ts';
import { Welch } from './welch.ts';

/**
 * IRASA, irregular-resampling auto-spectral analysis (Wen & Liu 2016, Brain Topography 29:13–26):
 * for each resampling factor h the Welch PSD of the signal up-sampled by h, S_h, and down-sampled
 * by h, S_1/h, both read at the original sampling rate; their geometric mean √(S_h·S_1/h) keeps a
 * fractal (power-law) component in place while moving oscillatory peaks to f·h and f/h; the median
 * over h is the aperiodic (fractal) spectrum. A power law is then fitted to it by log-log least
 * squares over the fit range.
 *
 * Usable range: the signal up-sampled by h and read at fs holds at frequency f what the original
 * held at h·f, so only f ≤ fs/(2·h_max) is covered by every factor. The spectra are cut there and
 * a fit range reaching above it is refused.
 */
export interface IrasaOptions {
  /** Welch segment length, s (default 4). */
  segmentS?: number;
  /** Welch segment overlap as a fraction, 0 ≤ overlap < 1 (default 0.5). */
  overlap?: number;
  /** Resampling factors h > 1 (default 1.1, 1.15, …, 1.9), each a ratio of integers (denominator ≤ 100). */
  resamplingFactors?: readonly number[];
  /** Power-law fit range, Hz, both ends included (default [1, 40]); hi ≤ fs/(2·h_max). */
  fitRangeHz?: readonly [number, number];
}

export interface IrasaFit {
  /** b, log10(µV²/Hz). */
  offset: number;
  /** χ (power ∝ f^−χ). */
  exponent: number;
  /** Always 0: IRASA's fit here is the plain power law. */
  knee: number;
  /** R² and RMSE (log10 units) of the line fitted to log10 of the aperiodic spectrum. */
  r2: number;
  rmse: number;
  fitLoHz: number;
  fitHiHz: number;
  method: 'irasa';
}

export interface IrasaResult {
  /** Bin frequencies, Hz, from 0 up to fs/(2·h_max). */
  freqsHz: Float64Array;
  /** Welch PSD of the signal as recorded, µV²/Hz. */
  totalPsd: Float64Array;
  /** Aperiodic (fractal) component, µV²/Hz: median over h of √(S_h·S_1/h). */
  aperiodicPsd: Float64Array;
  /** Oscillatory remainder, totalPsd − aperiodicPsd, µV²/Hz (may be negative by chance). */
  oscillatoryPsd: Float64Array;
  fit: IrasaFit;
  /** Highest usable frequency fs/(2·h_max), Hz. */
  maxFreqHz: number;
  /** Welch segments of the original signal. */
  nSegments: number;
}

export const IRASA_FACTORS: readonly number[] = Array.from({ length: 17 }, (_, i) => Math.round(110 + 5 * i) / 100);

/** Accumulates IRASA spectra over one or more stretches of signal (e.g. the epochs of one stage). */
export class Irasa {
  readonly fsHz: number;
  readonly maxFreqHz: number;
  private readonly welch: Welch;
  private readonly ratios: { up: number; down: number }[];
  private readonly fitRangeHz: readonly [number, number];
  private readonly total: Float64Array;
  private readonly upSums: Float64Array[];
  private readonly downSums: Float64Array[];
  private totalCount = 0;
  private readonly upCounts: number[];
  private readonly downCounts: number[];

  constructor(fsHz: number, options: IrasaOptions = {}) {
    const factors = options.resamplingFactors ?? IRASA_FACTORS;
    if (factors.length === 0) throw new SpectrumFitError('resamplingFactors: empty list');
    for (const h of factors) if (!(h > 1)) throw new SpectrumFitError(`resamplingFactors: factor ${h} is not above 1`);
    if (!(fsHz > 0)) throw new SpectrumFitError(`invalid sampling rate: ${fsHz} Hz`);
    this.fsHz = fsHz;
    this.ratios = factors.map((h) => rationalFactor(h));
    const hMax = Math.max(...factors);
    this.maxFreqHz = fsHz / (2 * hMax);
    const [lo, hi] = options.fitRangeHz ?? [1, 40];
    if (!(lo > 0 && hi > lo)) throw new SpectrumFitError(`fitRangeHz: invalid range [${lo}, ${hi}] Hz (need 0 < lo < hi)`);
    if (hi > this.maxFreqHz) {
      throw new SpectrumFitError(
        `fitRangeHz: upper end ${hi} Hz is above the IRASA limit fs/(2·h_max) = ${this.maxFreqHz.toFixed(3)} Hz (fs ${fsHz} Hz, h_max ${hMax})`,
      );
    }
    this.fitRangeHz = [lo, hi];
    this.welch = new Welch(fsHz, { segmentS: options.segmentS, overlap: options.overlap, maxFreqHz: this.maxFreqHz });
    const nb = this.welch.nBins;
    this.total = new Float64Array(nb);
    this.upSums = this.ratios.map(() => new Float64Array(nb));
    this.downSums = this.ratios.map(() => new Float64Array(nb));
    this.upCounts = this.ratios.map(() => 0);
    this.downCounts = this.ratios.map(() => 0);
  }

  /** Adds x[start … start+length) (µV); returns the number of Welch segments of the original. */
  add(x: ArrayLike<number>, start = 0, length = x.length - start): number {
    if (!(start >= 0 && length >= 0 && start + length <= x.length)) {
      throw new SpectrumFitError(`irasa: stretch [${start}, ${start + length}) outside a signal of ${x.length} samples`);
    }
    const piece = new Float64Array(length);
    for (let i = 0; i < length; i++) {
      const v = x[start + i];
      if (!Number.isFinite(v)) throw new SpectrumFitError(`irasa: sample ${start + i} is ${v}`);
      piece[i] = v;
    }
    const count = this.welch.accumulate(piece, 0, length, this.total);
    this.totalCount += count;
    for (let r = 0; r < this.ratios.length; r++) {
      const { up, down } = this.ratios[r];
      const upsampled = resamplePoly(piece, up, down);
      this.upCounts[r] += this.welch.accumulate(upsampled, 0, upsampled.length, this.upSums[r]);
      const downsampled = resamplePoly(piece, down, up);
      this.downCounts[r] += this.welch.accumulate(downsampled, 0, downsampled.length, this.downSums[r]);
    }
    return count;
  }

  /** The spectra and the power-law fit of everything added so far. */
  result(): IrasaResult {
    const nb = this.welch.nBins;
    if (this.totalCount === 0 || this.downCounts.some((c) => c === 0)) {
      throw new SpectrumFitError(
        `irasa: too little signal for one ${this.welch.segmentS}-s segment after down-sampling by ${Math.max(...this.ratios.map((r) => r.up / r.down))}`,
      );
    }
    const freqsHz = this.welch.frequencies();
    const totalPsd = new Float64Array(nb);
    const aperiodicPsd = new Float64Array(nb);
    const oscillatoryPsd = new Float64Array(nb);
    const pair = new Float64Array(this.ratios.length);
    for (let k = 0; k < nb; k++) {
      totalPsd[k] = this.total[k] / this.totalCount;
      // geometric mean of the up- and down-sampled spectra for each h, then the median over h
      for (let r = 0; r < this.ratios.length; r++) {
        pair[r] = Math.sqrt((this.upSums[r][k] / this.upCounts[r]) * (this.downSums[r][k] / this.downCounts[r]));
      }
      aperiodicPsd[k] = medianInPlace(pair);
      oscillatoryPsd[k] = totalPsd[k] - aperiodicPsd[k];
    }
    return {
      freqsHz,
      totalPsd,
      aperiodicPsd,
      oscillatoryPsd,
      fit: this.fitPowerLaw(freqsHz, aperiodicPsd),
      maxFreqHz: this.maxFreqHz,
      nSegments: this.totalCount,
    };
  }

  private fitPowerLaw(freqsHz: Float64Array, psd: Float64Array): IrasaFit {
    const [lo, hi] = this.fitRangeHz;
    const f: number[] = [];
    const y: number[] = [];
    for (let k = 0; k < freqsHz.length; k++) {
      if (freqsHz[k] >= lo && freqsHz[k] <= hi) {
        if (!(psd[k] > 0)) throw new SpectrumFitError(`irasa: aperiodic power ${psd[k]} at ${freqsHz[k]} Hz is not positive`);
        f.push(freqsHz[k]);
        y.push(Math.log10(psd[k]));
      }
    }
    if (f.length < 3) throw new SpectrumFitError(`fitRangeHz: only ${f.length} bins in [${lo}, ${hi}] Hz`);
    const line = fitPowerLawLine(f, y);
    let mean = 0;
    for (const v of y) mean += v / y.length;
    let ssRes = 0;
    let ssTot = 0;
    for (let i = 0; i < f.length; i++) {
      ssRes += (y[i] - (line.offset - line.exponent * Math.log10(f[i]))) ** 2;
      ssTot += (y[i] - mean) ** 2;
    }
    return {
      offset: line.offset,
      exponent: line.exponent,
      knee: 0,
      r2: ssTot > 0 ? 1 - ssRes / ssTot : 1,
      rmse: Math.sqrt(ssRes / f.length),
      fitLoHz: lo,
      fitHiHz: hi,
      method: 'irasa',
    };
  }
}

/** IRASA of one contiguous signal x (µV) sampled at fsHz. */
export function irasa(x: ArrayLike<number>, fsHz: number, options: IrasaOptions = {}): IrasaResult {
  const est = new Irasa(fsHz, options);
  est.add(x);
  return est.result();
}

// median of a small array (sorted in place; mean of the two middle values for even counts)
function medianInPlace(a: Float64Array): number {
  a.sort();
  const n = a.length;
  return n % 2 === 1 ? a[(n - 1) / 2] : 0.5 * (a[n / 2 - 1] + a[n / 2]);
}
