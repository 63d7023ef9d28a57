// The page's side of the contrast worker: one run at a time, progress, cancel.
import type { ContrastData } from '../../core/contrast/data.ts';
import type { CompareResult } from '../../core/contrast/run.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { RunRequest, WorkerReply } from './contrast-protocol.ts';

export class ContrastCancelled extends Error {
  override name = 'ContrastCancelled';
}

export interface RunningContrast {
  result: Promise<{ result: CompareResult; seconds: number }>;
  cancel(): void;
}

export function startContrast(contrast: Contrast, data: ContrastData, onProgress: (done: number, total: number) => void): RunningContrast {
  const worker = new Worker(new URL('./contrast.worker.ts', import.meta.url), { type: 'module' });
  let settle: ((e: Error) => void) | null = null;
  const result = new Promise<{ result: CompareResult; seconds: number }>((resolve, reject) => {
    settle = reject;
    worker.onmessage = (e: MessageEvent<WorkerReply>) => {
      const m = e.data;
      if (m.kind === 'progress') onProgress(m.done, m.total);
      else {
        worker.terminate();
        if (m.kind === 'result') resolve({ result: m.result, seconds: m.seconds });
        else reject(new Error(m.message));
      }
    };
    worker.onerror = (e) => {
      worker.terminate();
      reject(new Error(e.message || 'the contrast worker failed'));
    };
  });
  const req: RunRequest = { kind: 'run', contrast, data };
  worker.postMessage(req);
  return {
    result,
    cancel: () => {
      worker.terminate();
      settle?.(new ContrastCancelled('cancelled'));
    },
  };
}
