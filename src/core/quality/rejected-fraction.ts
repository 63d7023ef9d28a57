import { clampSeverity, pct, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface RejectedFractionOptions {
  /** Flag when more than this fraction of a stage's epochs is rejected (default 0.3; our choice, a common screening level). */
  maxFraction: number;
  /** Stages with fewer epochs than this get the fraction as a note, not a flag (a share of a handful of epochs says little; default 0). */
  minEpochs?: number;
}

export const DEFAULT_REJECTED_FRACTION: Readonly<RejectedFractionOptions> = { maxFraction: 0.3 };

/**
 * Fraction of a channel's epochs in one stage that were rejected, and why.
 * value = Σ rejectedByReason / nEpochs (each rejected epoch counted once, under its reason).
 * severity = value / maxFraction.
 */
export function rejectedFraction(
  cell: Cell,
  nEpochs: number,
  rejectedByReason: Readonly<Record<string, number>>,
  options: RejectedFractionOptions = DEFAULT_REJECTED_FRACTION,
): QualityRow {
  if (!Number.isInteger(nEpochs) || nEpochs < 0) throw new QualityInputError(`invalid nEpochs: ${nEpochs}`);
  let rejected = 0;
  for (const [reason, n] of Object.entries(rejectedByReason)) {
    if (!Number.isInteger(n) || n < 0) throw new QualityInputError(`invalid count for reason ${reason}: ${n}`);
    rejected += n;
  }
  if (rejected > nEpochs) throw new QualityInputError(`${rejected} rejected epochs out of ${nEpochs}`);
  const base = { ...cell, metric: 'rejected-fraction' as const };
  if (nEpochs === 0) return { ...base, value: null, flagged: false, reason: 'no epochs in this stage', severity: 0 };
  const value = rejected / nEpochs;
  const assessed = nEpochs >= (options.minEpochs ?? 0);
  const flagged = assessed && value > options.maxFraction;
  const why = Object.entries(rejectedByReason)
    .filter(([, n]) => n > 0)
    .sort((a, b) => b[1] - a[1])
    .map(([reason, n]) => `${reason} ${n}`)
    .join(', ');
  const reason = flagged
    ? `${pct(value)} of ${nEpochs} epochs rejected (${why}); more than ${pct(options.maxFraction)}`
    : !assessed && rejected > 0
      ? `${pct(value)} of only ${nEpochs} epochs rejected (${why}); too few epochs to flag`
      : null;
  return { ...base, value, flagged, reason, severity: clampSeverity(value / options.maxFraction) };
}
