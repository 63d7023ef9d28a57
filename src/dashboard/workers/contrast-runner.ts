// The page's side of the contrast workers: one run at a time over one or two workers (the
// permutations split between them, src/core/contrast/run.ts permutationShare), progress summed
// over the parts, cancel. Part 0 writes the result once the page hands it the other parts' nulls.
import type { ContrastData } from '../../core/contrast/data.ts';
import type { CompareResult } from '../../core/contrast/run.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { NullMaxima } from '../../core/stats/index.ts';
import type { RunRequest, WorkerReply, WorkerRequest } from './contrast-protocol.ts';

export class ContrastCancelled extends Error {
  override name = 'ContrastCancelled';
}

export interface RunningContrast {
  result: Promise<{ result: CompareResult; seconds: number }>;
  cancel(): void;
}

/**
 * A second worker holds its own copy of the rows, the assembled matrix and the statistic's tables,
 * about 20 bytes per stored bin (4 for the float32 rows, 8 + 8 for float64 values and centred
 * copies); it is started only while that stays below this.
 */
const SECOND_WORKER_BYTES = 200 * 1024 * 1024;

/**
 * Workers per contrast: two where the machine has two or more cores and the copy is small;
 * one for large cohorts, whose memory matters more than the permutations' time (2,000 recordings
 * × 64 channels: a second worker adds ~440 MB to the tab, measured by dashboard-scale.bench.ts,
 * and did not save time on this shared 2-core machine).
 */
export function contrastWorkerCount(data: ContrastData): number {
  const cores = globalThis.navigator?.hardwareConcurrency ?? 1;
  return cores >= 2 && data.spectra.rows.length * data.spectra.nBins * 20 <= SECOND_WORKER_BYTES ? 2 : 1;
}

export function startContrast(
  contrast: Contrast,
  data: ContrastData,
  onProgress: (done: number, total: number) => void,
  parts = contrastWorkerCount(data),
): RunningContrast {
  const workers = Array.from({ length: parts }, () => new Worker(new URL('./contrast.worker.ts', import.meta.url), { type: 'module' }));
  const stop = () => workers.forEach((w) => w.terminate());
  const done = new Array<number>(parts).fill(0);
  const total = new Array<number>(parts).fill(0);
  const others: NullMaxima[] = [];
  let settle: ((e: Error) => void) | null = null;
  const result = new Promise<{ result: CompareResult; seconds: number }>((resolve, reject) => {
    settle = (e) => {
      stop();
      reject(e);
    };
    workers.forEach((worker, part) => {
      worker.onmessage = (e: MessageEvent<WorkerReply>) => {
        const m = e.data;
        if (m.kind === 'progress') {
          done[part] = m.done;
          total[part] = m.total;
          onProgress(done.reduce((a, b) => a + b, 0), total.reduce((a, b) => a + b, 0));
        } else if (m.kind === 'nulls') {
          others.push(m.nulls);
          worker.terminate();
          if (others.length === parts - 1) {
            const req: WorkerRequest = { kind: 'nulls', nulls: others };
            workers[0].postMessage(req);
          }
        } else if (m.kind === 'result') {
          stop();
          resolve({ result: m.result, seconds: m.seconds });
        } else settle!(new Error(m.message));
      };
      worker.onerror = (e) => settle!(new Error(e.message || 'the contrast worker failed'));
    });
  });
  workers.forEach((worker, part) => {
    const req: RunRequest = { kind: 'run', contrast, data, part, parts };
    worker.postMessage(req);
  });
  return {
    result,
    cancel: () => settle?.(new ContrastCancelled('cancelled')),
  };
}
