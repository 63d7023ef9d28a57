/**
 * What a result says about the split and the plan it ran under: the part of the subjects it used,
 * the split, whether the groups were blinded, and for a confirmation the locked plan. Results of
 * a blinded exploration have their group sizes pooled (blind-results.ts).
 */
import type { Contrast } from '../contrast/spec.ts';
import type { Part } from './split.ts';

export interface SplitStamp {
  id: string;
  /** ISO time the split was made */
  madeAt: string;
  seed: number;
  fraction: number;
  stratify: string[];
  /** the blinded participants column, null when the split is not blinded */
  blindColumn: string | null;
  /** subjects per part */
  subjects: Record<Part, number>;
}

/** How many analyses had included confirmation-half subjects when a plan was locked (from the ledger and the database). */
export interface LooksBeforeLock {
  /** analyses on the whole cohort, before any split */
  wholeCohort: number;
  /** analyses on an earlier split's exploration part that holds subjects of this confirmation part */
  earlierSplits: number;
  /** confirmations (of any plan) on this confirmation part */
  confirmations: number;
}

export interface PlanStamp {
  id: string;
  /** SHA-256 (hex) of the plan's canonical JSON */
  hash: string;
  /** ISO time the plan was locked */
  lockedAt: string;
  /** 1 for the first confirmation of the plan, 2 for the next, … */
  confirmationRun: number;
  /** ISO times of the plan's earlier confirmations */
  earlierConfirmations: string[];
  /** this contrast's place in the plan (1-based) and the plan's number of contrasts */
  contrastIndex: number;
  contrasts: number;
  /** level each of the plan's contrasts is confirmed at: 0.05 / contrasts (Bonferroni) */
  alpha: number;
  /** the contrast as locked (its groups may be named by their codes) */
  lockedContrast: Contrast;
  /** exclusions the plan fixed */
  exclusions: number;
  analysedBeforeLock: LooksBeforeLock;
}

/** The fields a result gains while a split exists. */
export interface PartFields {
  part?: Part;
  split?: SplitStamp;
  /** the groups were coded and their sizes pooled */
  blinded?: boolean;
  plan?: PlanStamp;
}

/** One stored row of a split (table subject_split), times as ISO text. */
export interface SplitRow {
  split_id: unknown;
  subject: unknown;
  part: unknown;
  seed: unknown;
  fraction: unknown;
  stratify: unknown;
  blind_column: unknown;
  group_codes: unknown;
  made_at: string;
}

/** The split the rows of one split_id describe: its stamp, each subject's part and the blinding codes (null when not blinded). */
export function splitOfRows(rows: SplitRow[]): { stamp: SplitStamp; parts: Map<string, Part>; codes: Record<string, string> | null } {
  const first = rows[0];
  const parts = new Map(rows.map((r) => [String(r.subject), String(r.part) as Part]));
  const count = (p: Part) => [...parts.values()].filter((x) => x === p).length;
  const stamp: SplitStamp = {
    id: String(first.split_id),
    madeAt: first.made_at,
    seed: Number(first.seed),
    fraction: Number(first.fraction),
    stratify: JSON.parse(String(first.stratify)) as string[],
    blindColumn: first.blind_column === null ? null : String(first.blind_column),
    subjects: { exploration: count('exploration'), confirmation: count('confirmation') },
  };
  const codes = first.group_codes === null ? null : (JSON.parse(String(first.group_codes)) as Record<string, string>);
  return { stamp, parts, codes };
}
