// Messages between the contrast view and its worker (workers/contrast.worker.ts).
import type { ContrastData } from '../../core/contrast/data.ts';
import type { CompareResult } from '../../core/contrast/run.ts';
import type { Contrast } from '../../core/contrast/spec.ts';

export interface RunRequest {
  kind: 'run';
  contrast: Contrast;
  data: ContrastData;
}

export type WorkerReply =
  | { kind: 'progress'; done: number; total: number }
  | { kind: 'result'; result: CompareResult; seconds: number }
  | { kind: 'error'; message: string };
