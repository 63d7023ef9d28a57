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
