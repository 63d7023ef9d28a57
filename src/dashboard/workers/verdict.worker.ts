// Runs a band check or every path of a robustness run off the page's thread, with src/core/verdict
// (bandCheck, runPaths). Progress goes back at most every 50 ms; the page cancels by terminating.
import { bandCheck, runPaths } from '../../core/verdict/index.ts';
import type { VerdictReply, VerdictRequest } from './verdict-protocol.ts';

const post = (m: VerdictReply) => (self as unknown as Worker).postMessage(m);

let last = 0;
function progress(step: string, done: number, total: number): void {
  const now = performance.now();
  if (now - last < 50 && done !== total) return;
  last = now;
  post({ kind: 'progress', step, done, total });
}

self.onmessage = (e: MessageEvent<VerdictRequest>) => {
  const req = e.data;
  const t0 = performance.now();
  try {
    if (req.kind === 'band-check') {
      const result = bandCheck(req.contrast, req.band, req.data, { fitRangeHz: req.fitRangeHz, onProgress: progress });
      post({ kind: 'band-check', result, seconds: (performance.now() - t0) / 1000 });
    } else if (req.kind === 'paths') {
      const result = runPaths(req.contrast, req.band, req.choices, req.sets, { test: req.test, onProgress: (done, total) => progress('path', done, total) });
      post({ kind: 'paths', result, seconds: (performance.now() - t0) / 1000 });
    }
  } catch (err) {
    post({ kind: 'error', message: err instanceof Error ? err.message : String(err) });
  }
};
