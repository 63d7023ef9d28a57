// Runs one contrast off the page's thread: src/core/contrast's compare (assembly, then the
// permutation engine of src/core/stats). Progress goes back at most every 50 ms; the page
// cancels by terminating the worker.
import { compare } from '../../core/contrast/run.ts';
import type { RunRequest, WorkerReply } from './contrast-protocol.ts';

const post = (m: WorkerReply) => (self as unknown as Worker).postMessage(m);

self.onmessage = (e: MessageEvent<RunRequest>) => {
  const req = e.data;
  if (req.kind !== 'run') return;
  const t0 = performance.now();
  let last = 0;
  try {
    const result = compare(req.contrast, req.data, (done, total) => {
      const now = performance.now();
      if (now - last >= 50 || done === total) {
        last = now;
        post({ kind: 'progress', done, total });
      }
    });
    post({ kind: 'result', result, seconds: (performance.now() - t0) / 1000 });
  } catch (err) {
    post({ kind: 'error', message: err instanceof Error ? err.message : String(err) });
  }
};
