/**
 * `bandwise compare`'s permutations on several threads (node:worker_threads, one per core by
 * default): the contrast is assembled once in the main thread, its subjects × points matrix
 * copied once into a SharedArrayBuffer that every thread reads, and each thread (compare-worker.ts)
 * prepares the statistics from that assembly and runs its permutationShare; part 0 joins the null
 * maxima and finishes. The split is the one of src/core/contrast/run.ts (prepareCompare,
 * runPermutations of shares, finishCompare), so the result equals compare() exactly.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { AssembledContrast } from '../src/core/contrast/assemble.ts';
import type { CompareResult } from '../src/core/contrast/run.ts';
import type { Contrast } from '../src/core/contrast/spec.ts';
import { ContrastInputError, type Matrix, type NullMaxima, type ProgressCallback } from '../src/core/stats/index.ts';
import type { CompareWorkReply, CompareWorkRequest } from './compare-worker.ts';

const BOOTSTRAP = new URL('./compare-worker-bootstrap.mjs', import.meta.url);

/**
 * Below this many subject-points × permutations (about half a second of permutations on one
 * core here) one thread is quicker than starting workers with the TypeScript loader.
 */
const THREADED_WORK = 1e9;

/** Threads worth using for an assembled contrast: the machine's cores for a large one, else 1. */
export function defaultThreads(assembled: AssembledContrast, permutations: number): number {
  const work = assembled.input.data.length * permutations;
  return work >= THREADED_WORK ? availableParallelism() : 1;
}

function shared<T extends Matrix>(m: T): T {
  const copy = m instanceof Float32Array ? new Float32Array(new SharedArrayBuffer(m.byteLength)) : new Float64Array(new SharedArrayBuffer(m.byteLength));
  copy.set(m);
  return copy as T;
}

/** The assembly with its matrices (data, and a paired design's second condition) in shared memory. */
function sharedAssembly(a: AssembledContrast): AssembledContrast {
  const design = a.input.design.kind === 'paired' ? { ...a.input.design, second: shared(a.input.design.second) } : a.input.design;
  return { ...a, input: { ...a.input, data: shared(a.input.data), design } };
}

function workerError(m: Extract<CompareWorkReply, { kind: 'error' }>): Error {
  const e = m.name === 'ContrastInputError' ? new ContrastInputError(m.message, m.field!, m.value) : new Error(m.message);
  if (m.name !== 'ContrastInputError') e.name = m.name;
  if (m.stack) e.stack = m.stack;
  return e;
}

/** Runs the assembled contrast's permutations on `threads` worker threads and returns the finished result. */
export async function compareOnThreads(c: Contrast, assembled: AssembledContrast, threads: number, onProgress?: ProgressCallback): Promise<CompareResult> {
  if (!(Number.isInteger(threads) && threads >= 1)) throw new RangeError(`invalid number of threads: ${threads}`);
  const assembly = sharedAssembly(assembled);
  const workers = Array.from({ length: threads }, () => new Worker(BOOTSTRAP));
  const done = new Array<number>(threads).fill(0);
  try {
    return await new Promise<CompareResult>((resolve, reject) => {
      const others: NullMaxima[] = [];
      workers.forEach((w, part) => {
        w.on('error', reject);
        w.on('exit', (code) => reject(new Error(`compare worker ${part} exited with code ${code}`)));
        w.on('message', (m: CompareWorkReply) => {
          if (m.kind === 'progress') {
            done[m.part] = m.done;
            onProgress?.(done.reduce((a, b) => a + b, 0), m.count);
          } else if (m.kind === 'nulls') {
            others.push(m.nulls);
            if (others.length === threads - 1) workers[0].postMessage({ kind: 'nulls', nulls: others } satisfies CompareWorkRequest);
          } else if (m.kind === 'result') resolve(m.result);
          else reject(workerError(m));
        });
        w.postMessage({ kind: 'run', contrast: c, assembled: assembly, part, parts: threads } satisfies CompareWorkRequest);
      });
    });
  } finally {
    await Promise.all(workers.map((w) => w.terminate()));
  }
}
