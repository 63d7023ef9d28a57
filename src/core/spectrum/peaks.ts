import { peakLog10, type PeakParams } from './aperiodic-model.ts';

/**
 * Initial Gaussian peaks of a flattened spectrum (log10 power minus an aperiodic fit), steps 2–3
 * of Donoghue et al. (2020, Nature Neuroscience 23:1655–1665): take the highest point, stop when
 * it is below the threshold, estimate the width from the half-height crossings, subtract that
 * Gaussian and repeat; then drop peaks at the range edges and the lower of overlapping peaks.
 * The widths here are Gaussian standard deviations w (Hz).
 */
export interface PeakSearchOptions {
  /** Bounds on the Gaussian width w (standard deviation), Hz. */
  widthHz: readonly [number, number];
  /** Most peaks kept. */
  maxPeaks: number;
  /** Smallest peak height, log10 units above the aperiodic fit. */
  minHeight: number;
  /** Threshold as a multiple of the flattened spectrum's robust spread (1.4826 × MAD). */
  thresholdSd: number;
  /** Peaks whose centre lies closer than edgeGuardSd · w to either end of the range are dropped. */
  edgeGuardSd: number;
  /** Two peaks overlap when their centres are closer than overlapSd · (w₁ + w₂); the lower goes. */
  overlapSd: number;
}

// FWHM = 2·√(2 ln 2)·w for a Gaussian of standard deviation w
export const FWHM_PER_SD = 2 * Math.sqrt(2 * Math.LN2);

/**
 * Finds the initial peaks of flattened (log10 units) over freqsHz (ascending, evenly spaced or
 * not). `work` (same length) is overwritten with the residual after subtracting the peaks.
 * Returns the peaks sorted by centre frequency.
 */
export function findPeaks(
  freqsHz: Float64Array,
  flattened: Float64Array,
  options: PeakSearchOptions,
  work: Float64Array = new Float64Array(flattened.length),
): PeakParams[] {
  const n = flattened.length;
  work.set(flattened);
  const threshold = Math.max(options.minHeight, options.thresholdSd * robustSpread(flattened));
  const [wMin, wMax] = options.widthHz;
  const found: PeakParams[] = [];
  while (found.length < options.maxPeaks) {
    let iMax = 0;
    for (let i = 1; i < n; i++) if (work[i] > work[iMax]) iMax = i;
    const height = work[iMax];
    if (!(height >= threshold)) break;
    const centerHz = freqsHz[iMax];
    const fwhm = halfHeightWidth(freqsHz, work, iMax);
    const widthHz = Math.min(wMax, Math.max(wMin, fwhm / FWHM_PER_SD));
    const peak = { centerHz, height, widthHz };
    found.push(peak);
    for (let i = 0; i < n; i++) work[i] -= peakLog10(freqsHz[i], peak);
  }
  const inside = dropEdgePeaks(found, freqsHz[0], freqsHz[n - 1], options.edgeGuardSd);
  return dropOverlappingPeaks(inside, options.overlapSd);
}

/** Robust spread: 1.4826 × median absolute deviation from the median (a consistent SD estimate for normal data; common practice). */
export function robustSpread(values: Float64Array): number {
  const sorted = Float64Array.from(values).sort();
  const med = medianOfSorted(sorted);
  for (let i = 0; i < sorted.length; i++) sorted[i] = Math.abs(values[i] - med);
  sorted.sort();
  return 1.4826 * medianOfSorted(sorted);
}

function medianOfSorted(s: Float64Array): number {
  const n = s.length;
  return n % 2 === 1 ? s[(n - 1) / 2] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
}

/**
 * Full width at half height of the maximum at index iMax, Hz: the distance to the nearest
 * half-height crossing on each side (linear interpolation between bins); twice the shorter side,
 * so a neighbouring peak on one side does not widen the estimate. If neither side crosses inside
 * the range, the range itself bounds the width.
 */
function halfHeightWidth(freqsHz: Float64Array, y: Float64Array, iMax: number): number {
  const half = y[iMax] / 2;
  let left = Infinity;
  for (let i = iMax - 1; i >= 0; i--) {
    if (y[i] <= half) {
      const t = (y[i + 1] - half) / (y[i + 1] - y[i]);
      left = freqsHz[iMax] - (freqsHz[i + 1] - t * (freqsHz[i + 1] - freqsHz[i]));
      break;
    }
  }
  let right = Infinity;
  for (let i = iMax + 1; i < y.length; i++) {
    if (y[i] <= half) {
      const t = (y[i - 1] - half) / (y[i - 1] - y[i]);
      right = freqsHz[i - 1] + t * (freqsHz[i] - freqsHz[i - 1]) - freqsHz[iMax];
      break;
    }
  }
  const side = Math.min(left, right);
  return 2 * (Number.isFinite(side) ? side : freqsHz[y.length - 1] - freqsHz[0]);
}

/** Drops peaks whose centre lies within edgeGuardSd · w of loHz or hiHz. */
export function dropEdgePeaks(peaks: readonly PeakParams[], loHz: number, hiHz: number, edgeGuardSd: number): PeakParams[] {
  return peaks.filter((p) => p.centerHz - loHz >= edgeGuardSd * p.widthHz && hiHz - p.centerHz >= edgeGuardSd * p.widthHz);
}

/**
 * Of two peaks whose centres are closer than overlapSd · (w₁ + w₂), keeps the higher; repeats
 * until no pair overlaps. With overlapSd = 1 this is the separation below which two equal
 * Gaussians show a single maximum (a two-component equal-variance mixture is unimodal when the
 * means differ by at most 2w). Returns the peaks sorted by centre.
 */
export function dropOverlappingPeaks(peaks: readonly PeakParams[], overlapSd: number): PeakParams[] {
  const kept = [...peaks].sort((a, b) => a.centerHz - b.centerHz);
  let i = 0;
  while (i + 1 < kept.length) {
    const a = kept[i];
    const b = kept[i + 1];
    if (b.centerHz - a.centerHz < overlapSd * (a.widthHz + b.widthHz)) {
      kept.splice(a.height >= b.height ? i + 1 : i, 1);
      i = Math.max(0, i - 1);
    } else {
      i++;
    }
  }
  return kept;
}
