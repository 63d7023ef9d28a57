/**
 * Quality rows: one metric for one recording × channel × stage (channel or stage null when the
 * metric is not per channel or per stage), matching the database's quality table.
 *
 * severity puts every metric on one scale for the dashboard's grid: 0 = clean, 1 = at its
 * threshold, ≥ 1 = flagged; capped at SEVERITY_CAP so it stays a finite number.
 */
import type { Stage } from '../stages.ts';

export type QualityMetric =
  | 'rejected-fraction'
  | 'mains-hum'
  | 'narrow-spike'
  | 'flat-channel'
  | 'clipping'
  | 'cohort-distance'
  | 'aperiodic-r2'
  | 'aperiodic-exponent'
  | 'clean-epochs'
  | 'outlier-share';

export interface QualityRow {
  channel: string | null;
  stage: Stage | null;
  metric: QualityMetric;
  /** The metric's value in the unit its function documents; null when it cannot be computed. */
  value: number | null;
  flagged: boolean;
  /** Plain reason when flagged (or why the metric could not be computed), else null. */
  reason: string | null;
  /** 0 clean, ≥ 1 flagged, at most SEVERITY_CAP. */
  severity: number;
}

/** Where a row belongs: the channel and stage it describes. */
export interface Cell {
  channel: string | null;
  stage: Stage | null;
}

export const SEVERITY_CAP = 10;

/** Clamp a severity into [0, SEVERITY_CAP]; NaN (undefined ratio) counts as the cap. */
export function clampSeverity(x: number): number {
  if (Number.isNaN(x)) return SEVERITY_CAP;
  return Math.min(SEVERITY_CAP, Math.max(0, x));
}

/** A bad argument to a quality metric, naming the argument and its value. */
export class QualityInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'QualityInputError';
  }
}

/** Percent with one decimal, for reasons. */
export function pct(fraction: number): string {
  return `${(100 * fraction).toFixed(1)} %`;
}
