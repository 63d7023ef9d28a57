// The page's side of the verdict worker: one job per worker, progress, cancel.
import type { BandCheckResult, SpecificationCurve } from '../../core/verdict/index.ts';
import type { VerdictReply, VerdictRequest } from './verdict-protocol.ts';

export class VerdictCancelled extends Error {
  override name = 'VerdictCancelled';
}

export interface RunningJob<T> {
  result: Promise<{ result: T; seconds: number }>;
  cancel(): void;
}

type ResultOf<R extends VerdictRequest> = R['kind'] extends 'band-check' ? BandCheckResult : SpecificationCurve;

/** Start a band check or a robustness run in a new worker; the worker ends with the job. */
export function startVerdictJob<R extends VerdictRequest>(
  request: R,
  onProgress: (step: string, done: number, total: number) => void,
): RunningJob<ResultOf<R>> {
  const worker = new Worker(new URL('./verdict.worker.ts', import.meta.url), { type: 'module' });
  let fail: ((e: Error) => void) | null = null;
  const result = new Promise<{ result: ResultOf<R>; seconds: number }>((resolve, reject) => {
    fail = reject;
    worker.onmessage = (e: MessageEvent<VerdictReply>) => {
      const m = e.data;
      if (m.kind === 'progress') return onProgress(m.step, m.done, m.total);
      worker.terminate();
      if (m.kind === 'error') reject(new Error(m.message));
      else if (m.kind !== request.kind) reject(new Error(`the verdict worker answered ${m.kind} to a ${request.kind} request`));
      else resolve({ result: m.result as ResultOf<R>, seconds: m.seconds });
    };
    worker.onerror = (e) => {
      worker.terminate();
      reject(new Error(e.message || 'the verdict worker failed'));
    };
  });
  worker.postMessage(request);
  return {
    result,
    cancel: () => {
      worker.terminate();
      fail?.(new VerdictCancelled('cancelled'));
    },
  };
}
