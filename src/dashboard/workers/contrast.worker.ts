// Runs one contrast, or one part of it, off the page's thread: src/core/contrast's prepareCompare
// (assembly, then the statistics' preparation), the part's share of the permutations, and on part 0
// finishCompare once the other parts' null maxima arrive. Progress goes back at most every 50 ms;
// the page cancels by terminating the workers. Each message is handled synchronously, so the
// request's rows are garbage once the part's permutations are done.
import { finishCompare, permutationShare, prepareCompare, type PreparedCompare } from '../../core/contrast/run.ts';
import { concatNullMaxima, runPermutations, type NullMaxima } from '../../core/stats/index.ts';
import type { WorkerReply, WorkerRequest } from './contrast-protocol.ts';

const post = (m: WorkerReply) => (self as unknown as Worker).postMessage(m);

/** part 0's prepared contrast and own null maxima, waiting for the other parts' */
let waiting: { prepared: PreparedCompare; own: NullMaxima; t0: number } | null = null;

function fail(err: unknown): void {
  post({ kind: 'error', message: err instanceof Error ? err.message : String(err) });
}

self.onmessage = (e: MessageEvent<WorkerRequest>) => {
  const req = e.data;
  try {
    if (req.kind === 'run') {
      const t0 = performance.now();
      const prepared = prepareCompare(req.contrast, req.data);
      const range = permutationShare(prepared.prepared.test.scheme.count, req.part, req.parts);
      let last = 0;
      const own = runPermutations(prepared.prepared.test, range, (done, total) => {
        const now = performance.now();
        if (now - last >= 50 || done === total) {
          last = now;
          post({ kind: 'progress', done, total });
        }
      });
      if (req.part !== 0) post({ kind: 'nulls', nulls: own });
      else if (req.parts === 1) post({ kind: 'result', result: finishCompare(prepared, own), seconds: (performance.now() - t0) / 1000 });
      else waiting = { prepared, own, t0 };
    } else if (req.kind === 'nulls') {
      if (waiting === null) throw new Error('null maxima arrived before this part finished');
      const { prepared, own, t0 } = waiting;
      waiting = null;
      post({ kind: 'result', result: finishCompare(prepared, concatNullMaxima([own, ...req.nulls])), seconds: (performance.now() - t0) / 1000 });
    }
  } catch (err) {
    fail(err);
  }
};
