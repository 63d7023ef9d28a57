/**
 * The combined score of one cell of the dashboard's quality grid (one recording × channel,
 * stages pooled — or whatever rows the caller groups).
 *
 *   score = min(2, max over the cell's rows of severity)
 *
 * Every metric's severity is its value relative to its own threshold (0 clean, 1 at the
 * threshold, ≥ 1 flagged), so the score reads the same for every metric: below 1 nothing is
 * flagged, 1–2 at least one flag, 2 far past a threshold. The worst metric and all flagged
 * reasons come with it, so the grid can say why.
 */
import type { QualityMetric, QualityRow } from './row.ts';

export interface CellScore {
  /** 0–2, see above. */
  score: number;
  nFlagged: number;
  /** Metric with the highest severity, null for an empty cell. */
  worst: QualityMetric | null;
  /** Reasons of the flagged rows, worst first. */
  reasons: string[];
}

export const CELL_SCORE_MAX = 2;

export function cellScore(rows: readonly QualityRow[]): CellScore {
  let top = -Infinity;
  let worst: QualityMetric | null = null;
  for (const r of rows) {
    if (r.severity > top) [top, worst] = [r.severity, r.metric];
  }
  const flagged = rows.filter((r) => r.flagged).sort((a, b) => b.severity - a.severity);
  return {
    score: rows.length === 0 ? 0 : Math.min(CELL_SCORE_MAX, top),
    nFlagged: flagged.length,
    worst,
    reasons: flagged.map((r) => r.reason ?? r.metric),
  };
}
