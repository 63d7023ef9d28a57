import type { Stage } from '../../src/core/stages.ts';
import type { LabelMap } from '../../src/core/hypnogram/labels.ts';

/**
 * A note about the scoring that did not stop it; `epochs` are 0-based epoch indices (negative:
 * epochs before the recording start). Kinds: 'scoring-starts-late', 'scoring-ends-early', 'gap'
 * (epochs without any scoring; the hypnogram is then `partial`), 'trimmed-unscored',
 * 'trimmed-scored' (epochs outside the recording dropped), 'truncated' (partial last epoch
 * dropped), 'unscored-not-whole-epochs' (an unscored label taken over the whole epochs inside it), 'ignored-events', 'unknown-label' (scored as unscored), 'scoring-shift-snapped',
 * 'lights-*' (see lights.ts). Messages never quote annotation free text (names.ts).
 */
export interface ScoringWarning {
  kind: string;
  epochs: number[];
  message: string;
}

/** Stages of one recording, one per epoch from the recording start. */
export interface Hypnogram {
  epochS: number;
  stages: Stage[];
  /** Where the scoring came from, e.g. 'annotations:night.edf' or 'table:night.tsv'. */
  source: string;
  warnings: ScoringWarning[];
  /** Some epochs of the recording have no scoring at all (it starts late, ends early or has gaps). */
  partial: boolean;
}

export interface ScoringOptions {
  /** Epoch length in seconds; 30 by default. */
  epochS?: number;
  /** Extra labels; takes precedence over the built-in table. */
  labelMap?: LabelMap;
  /** 'error' (default): an unknown label stops the scoring; 'unscored': it becomes unscored with a warning. */
  unknownAs?: 'error' | 'unscored';
  /**
   * Recording length in seconds, when known. Then the hypnogram covers the whole recording in
   * whole epochs, unscored stretches at either end are reported as gaps and scoring past the
   * end is caught. Without it the hypnogram ends with the last scored epoch.
   */
  recordingDurationS?: number | null;
  /**
   * Scored stages before the recording start or past its end: false (default) refuses the
   * scoring (likely misaligned); true drops them with a 'trimmed-scored' warning. Unscored
   * labels there are always dropped, with a 'trimmed-unscored' warning.
   */
  trimScoredOutside?: boolean;
}

/** One problem of a scoring file; `epochs` are 0-based epoch indices (may be empty; negative: before the recording start). */
export interface ScoringProblem {
  kind: string;
  epochs: number[];
  message: string;
}

/** A scoring that cannot be used. `message` lists every problem found, not only the first. */
export class ScoringError extends Error {
  override name = 'ScoringError';
  readonly file: string;
  readonly epochs: number[];
  readonly problems: ScoringProblem[];

  constructor(file: string, problems: ScoringProblem[]) {
    const lines = problems.map((p) => `  - ${p.message}`).join('\n');
    super(`${file}: ${problems.length === 1 ? 'scoring problem' : `${problems.length} scoring problems`}:\n${lines}`);
    this.file = file;
    this.problems = problems;
    this.epochs = [...new Set(problems.flatMap((p) => p.epochs))].sort((a, b) => a - b);
  }
}

export function resolveEpochS(options: ScoringOptions | undefined, file: string): number {
  const epochS = options?.epochS ?? 30;
  if (!(epochS > 0) || !Number.isFinite(epochS)) {
    throw new ScoringError(file, [{ kind: 'epoch-length', epochs: [], message: `epoch length must be a positive number of seconds, got ${epochS}` }]);
  }
  return epochS;
}

/** "epochs 3–5 (90–180 s), 9 (270–300 s)": 0-based epoch ranges with their times. */
export function describeEpochs(epochs: readonly number[], epochS: number, maxRanges = 8): string {
  const sorted = [...new Set(epochs)].sort((a, b) => a - b);
  const ranges: [number, number][] = [];
  for (const e of sorted) {
    const last = ranges[ranges.length - 1];
    if (last && e === last[1] + 1) last[1] = e;
    else ranges.push([e, e]);
  }
  const fmt = (s: number) => String(Math.round(s * 1000) / 1000);
  const parts = ranges
    .slice(0, maxRanges)
    .map(([a, b]) => (a === b ? `${a} (${fmt(a * epochS)}–${fmt((a + 1) * epochS)} s)` : `${a}–${b} (${fmt(a * epochS)}–${fmt((b + 1) * epochS)} s)`));
  const more = ranges.length > maxRanges ? ` and ${ranges.length - maxRanges} more ranges` : '';
  return `${sorted.length === 1 ? 'epoch' : 'epochs'} ${parts.join(', ')}${more}`;
}
