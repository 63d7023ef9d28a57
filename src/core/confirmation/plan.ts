/**
 * A locked analysis plan: the contrasts, the ingest run, the exclusions and the split, fixed
 * before the confirmation part is analysed. Its identity is the SHA-256 of its canonical JSON
 * (keys sorted), so the same plan always has the same hash and any change gives a new plan.
 */
import type { Contrast } from '../contrast/spec.ts';
import type { Exclusion } from '../contrast/data.ts';
import type { SplitStamp } from './stamp.ts';

export interface PlanContent {
  /** version of this plan format */
  format: 1;
  runId: string;
  /** the contrasts, as given (groups of a blinded split may be named by their codes) */
  contrasts: Contrast[];
  exclusions: Exclusion[];
  split: Pick<SplitStamp, 'id' | 'seed' | 'fraction' | 'stratify' | 'blindColumn'>;
}

export interface StoredPlan {
  id: string;
  /** SHA-256 (hex) of the canonical plan JSON */
  hash: string;
  /** ISO time of the lock */
  lockedAt: string;
  content: PlanContent;
}

/** A plan's id: the first 12 hex digits of its hash. */
export function planId(hash: string): string {
  if (!/^[0-9a-f]{64}$/.test(hash)) throw new Error(`not a SHA-256 hex digest: ${hash}`);
  return hash.slice(0, 12);
}

/** Level each of a plan's contrasts is confirmed at: α / contrasts (Bonferroni; common practice). */
export function planAlpha(contrasts: number, alpha = 0.05): number {
  return alpha / contrasts;
}
