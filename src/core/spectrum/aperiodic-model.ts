/**
 * The spectral model in log10 power (Donoghue et al. 2020, Nature Neuroscience 23:1655–1665):
 *   L(f) = b − log10(k + f^χ) + Σ_j h_j · exp(−(f − c_j)² / (2 w_j²))
 * with offset b (log10 µV²/Hz), exponent χ, knee k ≥ 0 (k = 0: plain power law), and Gaussian
 * peaks of height h_j (log10 units above the aperiodic part), centre c_j (Hz) and width w_j (Hz,
 * the Gaussian standard deviation).
 */
export interface AperiodicParams {
  offset: number;
  exponent: number;
  knee: number;
}

export interface PeakParams {
  centerHz: number;
  height: number;
  widthHz: number;
}

/** Aperiodic part in log10 power at frequency fHz: b − log10(k + f^χ). */
export function aperiodicLog10(fHz: number, p: AperiodicParams): number {
  return p.offset - Math.log10(p.knee + Math.pow(fHz, p.exponent));
}

/** One Gaussian peak in log10 units: h · exp(−(f − c)² / (2w²)). */
export function peakLog10(fHz: number, p: PeakParams): number {
  const d = fHz - p.centerHz;
  return p.height * Math.exp((-d * d) / (2 * p.widthHz * p.widthHz));
}

/** The full model L(f) at each frequency, written into out (log10 µV²/Hz). */
export function modelLog10(
  freqsHz: ArrayLike<number>,
  aperiodic: AperiodicParams,
  peaks: readonly PeakParams[],
  out: Float64Array = new Float64Array(freqsHz.length),
): Float64Array {
  for (let i = 0; i < freqsHz.length; i++) {
    let v = aperiodicLog10(freqsHz[i], aperiodic);
    for (const pk of peaks) v += peakLog10(freqsHz[i], pk);
    out[i] = v;
  }
  return out;
}
