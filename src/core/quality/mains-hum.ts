/**
 * Mains hum: power in a narrow band at the power-line frequency relative to its neighbourhood.
 *
 *   ratio_dB = 10 · log10( mean P(f), |f − f0| ≤ halfWidthHz
 *                        / mean P(f), innerHz ≤ |f − f0| ≤ outerHz )
 *
 * with P the PSD (µV²/Hz) and f0 = 50 or 60 Hz. A smooth spectrum gives about 0 dB; a line at
 * f0 gives a large positive ratio, the spiky peak that tells artifact from physiology. When f0
 * is not known (BIDS sidecar PowerLineFrequency, or an option) it is detected as whichever of
 * 50/60 Hz has the larger ratio.
 *
 * The spectrum must reach f0 + outerHz (58 Hz for 50 Hz, 68 Hz for 60 Hz with the defaults):
 * the stored spectra stop at 45 Hz, so the pipeline computes a separate high-range spectrum for
 * this metric.
 */
import { clampSeverity, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface MainsHumOptions {
  /** Power-line frequency in Hz (50 or 60); null = detect. */
  lineHz: 50 | 60 | null;
  /** Half-width of the line band, Hz (default 1). */
  halfWidthHz: number;
  /** Neighbourhood on each side from innerHz to outerHz away from the line, Hz (default 3–8). */
  innerHz: number;
  outerHz: number;
  /** Flag above this ratio, dB (default 6: the line band holds 4× the neighbourhood's density; our choice). */
  thresholdDb: number;
}

export const DEFAULT_MAINS_HUM: Readonly<MainsHumOptions> = {
  lineHz: null,
  halfWidthHz: 1,
  innerHz: 3,
  outerHz: 8,
  thresholdDb: 6,
};

/** ratio_dB at lineHz, or null when the spectrum does not reach lineHz + outerHz. */
export function mainsRatioDb(
  freqsHz: ArrayLike<number>,
  power: ArrayLike<number>,
  lineHz: number,
  options: Pick<MainsHumOptions, 'halfWidthHz' | 'innerHz' | 'outerHz'> = DEFAULT_MAINS_HUM,
): number | null {
  if (freqsHz.length !== power.length) throw new QualityInputError(`freqsHz has ${freqsHz.length} bins, power ${power.length}`);
  if (freqsHz.length === 0 || freqsHz[freqsHz.length - 1] < lineHz + options.outerHz) return null;
  let lineSum = 0;
  let lineN = 0;
  let nbSum = 0;
  let nbN = 0;
  for (let k = 0; k < freqsHz.length; k++) {
    const d = Math.abs(freqsHz[k] - lineHz);
    if (d <= options.halfWidthHz) {
      lineSum += power[k];
      lineN++;
    } else if (d >= options.innerHz && d <= options.outerHz) {
      nbSum += power[k];
      nbN++;
    }
  }
  if (lineN === 0 || nbN === 0) throw new QualityInputError(`no bins in the line band or the neighbourhood of ${lineHz} Hz`);
  if (!(nbSum > 0) || !(lineSum >= 0)) throw new QualityInputError(`power near ${lineHz} Hz is not positive`);
  return 10 * Math.log10(lineSum / lineN / (nbSum / nbN));
}

/**
 * The mains-hum row: value = ratio_dB at the (given or detected) line frequency, flagged above
 * thresholdDb; severity = max(0, ratio_dB) / thresholdDb. Not assessable (value null, not
 * flagged) when the spectrum ends below f0 + outerHz for every candidate; a given lineHz the
 * spectrum cannot reach is an error (the pipeline must pass a high-range spectrum).
 */
export function mainsHum(
  cell: Cell,
  freqsHz: ArrayLike<number>,
  power: ArrayLike<number>,
  options: MainsHumOptions = DEFAULT_MAINS_HUM,
): QualityRow & { lineHz: number | null } {
  const base = { ...cell, metric: 'mains-hum' as const };
  const top = freqsHz.length > 0 ? freqsHz[freqsHz.length - 1] : 0;
  let lineHz: number | null = null;
  let ratio: number | null = null;
  if (options.lineHz !== null) {
    ratio = mainsRatioDb(freqsHz, power, options.lineHz, options);
    if (ratio === null) {
      throw new QualityInputError(
        `spectrum ends at ${top} Hz; the ${options.lineHz} Hz mains check needs ${options.lineHz + options.outerHz} Hz (compute a high-range spectrum)`,
      );
    }
    lineHz = options.lineHz;
  } else {
    for (const candidate of [50, 60]) {
      const r = mainsRatioDb(freqsHz, power, candidate, options);
      if (r !== null && (ratio === null || r > ratio)) [ratio, lineHz] = [r, candidate];
    }
  }
  if (ratio === null || lineHz === null) {
    return { ...base, lineHz: null, value: null, flagged: false, reason: `not assessable: spectrum ends at ${top} Hz`, severity: 0 };
  }
  const flagged = ratio > options.thresholdDb;
  const how = options.lineHz === null ? 'detected' : 'given';
  const reason = flagged
    ? `${lineHz} Hz mains line (${how}): ${ratio.toFixed(1)} dB above its ${options.innerHz}–${options.outerHz} Hz neighbourhood (threshold ${options.thresholdDb} dB)`
    : null;
  return { ...base, lineHz, value: ratio, flagged, reason, severity: clampSeverity(Math.max(0, ratio) / options.thresholdDb) };
}
