// Messages between the contrast view and its workers (workers/contrast.worker.ts). A contrast runs
// on `parts` workers: each prepares the same contrast and runs its share of the permutations
// (src/core/contrast/run.ts, permutationShare); part 0 gets the other parts' null maxima from the
// page and writes the result — identical to one worker's, as permutation i depends only on (seed, i).
import type { ContrastData } from '../../core/contrast/data.ts';
import type { CompareResult } from '../../core/contrast/run.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { NullMaxima } from '../../core/stats/index.ts';

export interface RunRequest {
  kind: 'run';
  contrast: Contrast;
  data: ContrastData;
  part: number;
  parts: number;
}

/** To part 0: the null maxima of the other parts. */
export interface NullsRequest {
  kind: 'nulls';
  nulls: NullMaxima[];
}

export type WorkerRequest = RunRequest | NullsRequest;

export type WorkerReply =
  | { kind: 'progress'; done: number; total: number }
  | { kind: 'nulls'; nulls: NullMaxima }
  | { kind: 'result'; result: CompareResult; seconds: number }
  | { kind: 'error'; message: string };
