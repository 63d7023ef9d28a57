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
 * A second worker holds its own copy of the rows and of the assembled matrix, about 12 bytes per
 * stored bin (4 for the float32 rows, 8 for the float64 matrix; the statistics sum that matrix as
 * it is, src/core/stats/two-group-t.ts); it is started only while that stays below this.
 */
const SECOND_WORKER_BYTES = 200 * 1024 * 1024;

/**
 * Workers per contrast: two where the machine has two or more cores and the copy is small
 * enough; one for larger cohorts, whose memory matters more than the permutations' time (2,000
 * recordings × 64 channels × 0.5–30 Hz, 186 MB a worker: two workers, measured by
 * dashboard-scale.bench.ts).
 */
export function contrastWorkerCount(data: ContrastData): number {
  const cores = globalThis.navigator?.hardwareConcurrency ?? 1;
  return cores >= 2 && data.spectra.rows.length * data.spectra.nBins * 12 <= SECOND_WORKER_BYTES ? 2 : 1;
}

/**
 * The rows for one worker with their power lists in fresh buffers that are transferred, not
 * serialized: the page never holds a serialized copy of them beside the worker's, which lowers the
 * tab's peak by a copy of the lists per worker (61 MB at 2,000 × 64 × 121 bins).
 */
function ownCopy(data: ContrastData): { data: ContrastData; transfer: ArrayBuffer[] } {
  const copies = new Map<ArrayBufferLike, ArrayBuffer>();
  const rows = data.spectra.rows.map((r) => {
    let copy = copies.get(r.power.buffer);
    if (copy === undefined) {
      copy = r.power.buffer.slice(0) as ArrayBuffer;
      copies.set(r.power.buffer, copy);
    }
    return { ...r, power: new Float32Array(copy, r.power.byteOffset, r.power.length) };
  });
  return { data: { ...data, spectra: { ...data.spectra, rows } }, transfer: [...copies.values()] };
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
          // the first progress of part 0: its data are assembled and the statistic prepared
          if (part === 0 && done[0] === 0) performance.mark('bandwise:permutations-started');
          done[part] = m.done;
          total[part] = m.total;
          onProgress(
            done.reduce((a, b) => a + b, 0),
            total.reduce((a, b) => a + b, 0),
          );
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
    const { data: own, transfer } = ownCopy(data);
    const req: RunRequest = { kind: 'run', contrast, data: own, part, parts };
    worker.postMessage(req, transfer);
  });
  return {
    result,
    cancel: () => settle?.(new ContrastCancelled('cancelled')),
  };
}
