/**
 * Shards of a cohort: `--shard K/N` takes a stable 1/N share of the recordings, so N processes
 * (e.g. the tasks of a Slurm job array) together cover the cohort exactly once.
 *
 * The rule, documented for users: sort the recordings by (subject, session, recording path),
 * comparing strings by UTF-16 code units (no locale, so every machine sorts alike; a missing
 * session sorts before any session). The recording at sorted index i (from 0) belongs to shard
 * (i mod N) + 1. K counts from 1 to N. The share does not depend on the order of the cohort
 * table's rows, only on its content; shard sizes differ by at most one.
 */
import type { CohortRecording } from './types.ts';

/** A shard K of N (K from 1). */
export interface ShardSpec {
  k: number;
  n: number;
}

/** A --shard value or shard numbers that cannot be used. */
export class ShardError extends Error {
  override name = 'ShardError';
}

/** Parse "K/N" (e.g. "2/4"): integers with 1 ≤ K ≤ N. */
export function parseShard(text: string): ShardSpec {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw new ShardError(`invalid shard '${text}': expected K/N with 1 ≤ K ≤ N, e.g. 2/4`);
  const spec = { k: Number(m[1]), n: Number(m[2]) };
  checkShard(spec.k, spec.n, text);
  return spec;
}

/** Throws a ShardError unless k and n are integers with 1 ≤ k ≤ n. */
export function checkShard(k: number, n: number, shown = `${k}/${n}`): void {
  if (!Number.isSafeInteger(n) || n < 1) throw new ShardError(`invalid shard '${shown}': the shard count N must be a whole number ≥ 1, got ${n}`);
  if (!Number.isSafeInteger(k) || k < 1 || k > n) {
    throw new ShardError(`invalid shard '${shown}': K must be a whole number from 1 to N = ${n}, got ${k}`);
  }
}

/** Code-unit order (not locale order), missing session first. */
function compareText(a: string | null, b: string | null): number {
  if (a === b) return 0;
  if (a === null) return -1;
  if (b === null) return 1;
  return a < b ? -1 : 1;
}

/** The recordings in the documented shard order: subject, then session, then recording path. */
export function shardOrder(recordings: readonly CohortRecording[]): CohortRecording[] {
  return [...recordings].sort(
    (a, b) => compareText(a.subject, b.subject) || compareText(a.session, b.session) || compareText(a.recordingPath, b.recordingPath),
  );
}

/** Shard k of n: the recordings at sorted index i with i mod n = k − 1, in sorted order. */
export function selectShard(recordings: readonly CohortRecording[], k: number, n: number): CohortRecording[] {
  checkShard(k, n);
  return shardOrder(recordings).filter((_, i) => i % n === k - 1);
}
