/**
 * One permutation thread of `bandwise compare` (ingest/compare-threads.ts starts them): given the
 * assembled contrast (its subjects × points matrix in a SharedArrayBuffer, so every thread reads
 * the one copy), it prepares the statistics (src/core/contrast/run.ts prepareAssembled), runs its
 * permutationShare, and either posts its null maxima (parts > 0) or, as part 0, waits for the
 * others' and posts the finished result. Progress goes back at most every 100 ms.
 */
import { parentPort } from 'node:worker_threads';
import type { AssembledContrast } from '../src/core/contrast/assemble.ts';
import { finishCompare, permutationShare, prepareAssembled, type CompareResult, type PreparedCompare } from '../src/core/contrast/run.ts';
import type { Contrast } from '../src/core/contrast/spec.ts';
import { ContrastInputError, concatNullMaxima, runPermutations, type NullMaxima } from '../src/core/stats/index.ts';

export type CompareWorkRequest =
  | { kind: 'run'; contrast: Contrast; assembled: AssembledContrast; part: number; parts: number }
  | { kind: 'nulls'; nulls: NullMaxima[] };

export type CompareWorkReply =
  /** done: permutations of this part so far; count: permutations of the whole contrast */
  | { kind: 'progress'; part: number; done: number; count: number }
  | { kind: 'nulls'; part: number; nulls: NullMaxima }
  | { kind: 'result'; result: CompareResult }
  /** field and value are set for a ContrastInputError (rebuilt with its type in the main thread) */
  | { kind: 'error'; name: string; message: string; stack?: string; field?: string; value?: unknown };

if (!parentPort) throw new Error('ingest/compare-worker.ts must run in a worker thread');
const port = parentPort;
const post = (m: CompareWorkReply) => port.postMessage(m);

/** part 0's prepared contrast and own null maxima, waiting for the other parts' */
let waiting: { prepared: PreparedCompare; own: NullMaxima } | null = null;

port.on('message', (req: CompareWorkRequest) => {
  try {
    if (req.kind === 'run') {
      const prepared = prepareAssembled(req.contrast, req.assembled);
      const count = prepared.prepared.test.scheme.count;
      const range = permutationShare(count, req.part, req.parts);
      let last = 0;
      const own = runPermutations(prepared.prepared.test, range, (done, total) => {
        const now = performance.now();
        if (now - last >= 100 || done === total) {
          last = now;
          post({ kind: 'progress', part: req.part, done, count });
        }
      });
      if (req.part !== 0) post({ kind: 'nulls', part: req.part, nulls: own });
      else if (req.parts === 1) post({ kind: 'result', result: finishCompare(prepared, own) });
      else waiting = { prepared, own };
    } else {
      if (waiting === null) throw new Error('null maxima arrived before part 0 finished its own');
      const { prepared, own } = waiting;
      waiting = null;
      post({ kind: 'result', result: finishCompare(prepared, concatNullMaxima([own, ...req.nulls])) });
    }
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    post({
      kind: 'error', name: err.name, message: err.message, stack: err.stack,
      ...(err instanceof ContrastInputError ? { field: err.field, value: err.value } : {}),
    });
  }
});
