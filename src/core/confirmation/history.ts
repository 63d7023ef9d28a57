/**
 * Had data of the confirmation part been analysed before a plan was locked? Read from the
 * ledger (every analysis the command line ran, with the part and split it used) and the
 * confirmations the database holds: analyses on the whole cohort before any split, on an
 * earlier split whose subjects overlap this confirmation part, and confirmations on this part.
 */
import type { LooksBeforeLock } from './stamp.ts';
import type { Part } from './split.ts';

/** The ledger fields the question needs. */
export interface LedgerLook {
  time: string;
  kind: string;
  part?: Part;
  splitId?: string;
  planId?: string;
  confirmationRun?: number;
}

export interface CurrentPart {
  splitId: string;
  /** the subjects of the current confirmation part */
  confirmation: ReadonlySet<string>;
}

const ANALYSES = new Set(['compare', 'band-check']);

/**
 * Counts the looks at the confirmation part before `lockedAt` (ISO time). `partSubjects` gives
 * the subjects of a part of an earlier split (null when the database no longer knows that split:
 * then it counts, as the cautious answer). `confirmations` are the database's records of
 * confirmations on the current split, counted once with the ledger's.
 */
export function looksBeforeLock(
  entries: readonly LedgerLook[],
  lockedAt: string,
  current: CurrentPart,
  partSubjects: (splitId: string, part: Part) => ReadonlySet<string> | null,
  confirmations: readonly { planId: string; run: number; time: string }[],
): LooksBeforeLock {
  const before = (t: string) => Date.parse(t) < Date.parse(lockedAt);
  const out: LooksBeforeLock = { wholeCohort: 0, earlierSplits: 0, confirmations: 0 };
  const runs = new Set<string>();
  for (const e of entries) {
    if (!ANALYSES.has(e.kind) || !before(e.time)) continue;
    if (e.splitId === undefined || e.part === undefined) out.wholeCohort++;
    else if (e.splitId !== current.splitId) {
      const seen = partSubjects(e.splitId, e.part);
      if (seen === null || [...seen].some((s) => current.confirmation.has(s))) out.earlierSplits++;
    } else if (e.part === 'confirmation') runs.add(`${e.planId ?? '?'}#${e.confirmationRun ?? e.time}`);
  }
  for (const c of confirmations) if (before(c.time)) runs.add(`${c.planId}#${c.run}`);
  out.confirmations = runs.size;
  return out;
}

/** Whether any analysis had included confirmation-part subjects before the lock. */
export function lookedBeforeLock(l: LooksBeforeLock): boolean {
  return l.wholeCohort + l.earlierSplits + l.confirmations > 0;
}
