import { clampSeverity, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface FlatChannelOptions {
  /** Near-flat below this robust SD, µV (default 2; our choice — live scalp EEG has an SD of several µV even in wake). */
  minSdUv: number;
}

export const DEFAULT_FLAT_CHANNEL: Readonly<FlatChannelOptions> = { minSdUv: 2 };

/**
 * Flat or near-flat channel from its robust SD in µV (1.4826 · MAD of the samples, or of
 * per-epoch values — the pipeline says which in its parameters).
 * value = robustSdUv; flagged when below minSdUv; severity = minSdUv / robustSdUv.
 */
export function flatChannel(cell: Cell, robustSdUv: number, options: FlatChannelOptions = DEFAULT_FLAT_CHANNEL): QualityRow {
  if (!(robustSdUv >= 0)) throw new QualityInputError(`invalid robustSdUv: ${robustSdUv}`);
  const flagged = robustSdUv < options.minSdUv;
  const reason = flagged
    ? robustSdUv === 0
      ? 'flat channel: the signal never changes'
      : `near-flat channel: robust SD ${robustSdUv.toFixed(2)} µV, below ${options.minSdUv} µV`
    : null;
  return { ...cell, metric: 'flat-channel', value: robustSdUv, flagged, reason, severity: clampSeverity(options.minSdUv / robustSdUv) };
}
