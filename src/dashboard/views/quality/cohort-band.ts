// The cohort's spread of one channel's spectrum: median and inter-quartile range per bin.

/** Quantile q of ascending `sorted` by linear interpolation between order statistics (R-7; Hyndman & Fan 1996, definition 7). */
export function quantileSorted(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0) return Number.NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export interface SpectrumQuartiles {
  freqsHz: Float64Array;
  q25: Float64Array;
  median: Float64Array;
  q75: Float64Array;
}

/** Per-bin 25th, 50th and 75th percentiles over the rows of a rows × nBins matrix (µV²/Hz). */
export function spectrumQuartiles(power: Float32Array, nBins: number, freqStartHz: number, freqStepHz: number): SpectrumQuartiles {
  const n = nBins > 0 ? power.length / nBins : 0;
  const out = { freqsHz: new Float64Array(nBins), q25: new Float64Array(nBins), median: new Float64Array(nBins), q75: new Float64Array(nBins) };
  const column = new Float64Array(n);
  for (let b = 0; b < nBins; b++) {
    for (let r = 0; r < n; r++) column[r] = power[r * nBins + b];
    column.sort();
    out.freqsHz[b] = freqStartHz + b * freqStepHz;
    out.q25[b] = quantileSorted(column, 0.25);
    out.median[b] = quantileSorted(column, 0.5);
    out.q75[b] = quantileSorted(column, 0.75);
  }
  return out;
}
