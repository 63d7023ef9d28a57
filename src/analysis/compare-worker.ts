/**
 * One permutation thread of `bandwise compare` (src/analysis/compare-threads.ts starts them; the main
 * thread runs part 0 itself and finishes): given the assembled contrast (its subjects × points
 * matrix in a SharedArrayBuffer, so every thread reads the one copy), it prepares the statistics
 * (src/core/contrast/run.ts prepareAssembled), runs its permutationShare and posts the null
 * maxima. Progress goes to its own port at most every 100 ms (the main thread reads it
 * synchronously while it computes its own share).
 */
import { parentPort, type MessagePort } from 'node:worker_threads';
import type { AssembledContrast } from '../core/contrast/assemble.ts';
import { permutationShare, prepareAssembled } from '../core/contrast/run.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import { PermutationTestInputError, runPermutations, type NullMaxima } from '../core/stats/index.ts';

export interface CompareWorkRequest {
  contrast: Contrast;
  assembled: AssembledContrast;
  part: number;
  parts: number;
  /** receives { done } (permutations of this part so far) */
  progress: MessagePort;
}

export type CompareWorkReply =
  | { kind: 'nulls'; part: number; nulls: NullMaxima }
  /** field and value are set for a PermutationTestInputError (rebuilt with its type in the main thread) */
  | { kind: 'error'; name: string; message: string; stack?: string; field?: string; value?: unknown };

if (!parentPort) throw new Error('src/analysis/compare-worker.ts must run in a worker thread');
const port = parentPort;
const post = (m: CompareWorkReply) => port.postMessage(m);

port.on('message', (req: CompareWorkRequest) => {
  try {
    const prepared = prepareAssembled(req.contrast, req.assembled);
    const range = permutationShare(prepared.prepared.test.scheme.count, req.part, req.parts);
    let last = 0;
    const nulls = runPermutations(prepared.prepared.test, range, (done, total) => {
      const now = performance.now();
      if (now - last >= 100 || done === total) {
        last = now;
        req.progress.postMessage({ done });
      }
    });
    post({ kind: 'nulls', part: req.part, nulls });
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    post({
      kind: 'error',
      name: err.name,
      message: err.message,
      stack: err.stack,
      ...(err instanceof PermutationTestInputError ? { field: err.field, value: err.value } : {}),
    });
  } finally {
    req.progress.close();
  }
});
