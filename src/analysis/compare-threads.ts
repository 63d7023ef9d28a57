/**
 * `bandwise compare`'s permutations on several threads (node:worker_threads, one per core by
 * default): the contrast is assembled once, its subjects × points matrix copied once into a
 * SharedArrayBuffer that every thread reads (sharedAssembly); the main thread and threads − 1
 * workers (compare-worker.ts) each prepare the statistics from that assembly and run their
 * permutationShare, and the main thread joins the null maxima and finishes. The split is the one
 * of src/core/contrast/run.ts (prepareCompare, runPermutations of shares, finishCompare), so the
 * result equals compare() exactly. Part 0 runs on the main thread so that preparing its
 * statistics (a matrix-sized allocation) lets the main thread's garbage collector free the rows
 * read and the unshared matrix before the permutations.
 */
import { availableParallelism } from 'node:os';
import { MessageChannel, Worker, receiveMessageOnPort, type MessagePort } from 'node:worker_threads';
import type { AssembledContrast } from '../core/contrast/assemble.ts';
import { finishCompare, permutationShare, prepareAssembled, type CompareResult } from '../core/contrast/run.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import { PermutationTestInputError, concatNullMaxima, runPermutations, type Matrix, type NullMaxima, type ProgressCallback } from '../core/stats/index.ts';
import type { CompareWorkReply, CompareWorkRequest } from './compare-worker.ts';
import { compareWorkerUrl } from './compare-worker-url.ts';

/**
 * Below this many subject-points × permutations (about 3 s of permutations on one core here:
 * 2,000 subjects × 7,616 points × 1000 took 9.8 s) the workers' start with the TypeScript loader
 * and their own preparation of the statistics take most of what they save (large-cohort bench,
 * 500 recordings on the loaded 2 cores: 9.2 s on two threads, 5.0 s on one).
 */
const THREADED_WORK = 5e9;

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
export function sharedAssembly(a: AssembledContrast): AssembledContrast {
  const design = a.input.design.kind === 'paired' ? { ...a.input.design, second: shared(a.input.design.second) } : a.input.design;
  return { ...a, input: { ...a.input, data: shared(a.input.data), design } };
}

function workerError(m: Extract<CompareWorkReply, { kind: 'error' }>): Error {
  const e = m.name === 'PermutationTestInputError' ? new PermutationTestInputError(m.message, m.field!, m.value) : new Error(m.message);
  if (m.name !== 'PermutationTestInputError') e.name = m.name;
  if (m.stack) e.stack = m.stack;
  return e;
}

/**
 * Runs a shared assembly's permutations on this thread and threads − 1 workers and returns the
 * finished result. onProgress gets the permutations done over all threads.
 */
export async function compareOnThreads(c: Contrast, assembly: AssembledContrast, threads: number, onProgress?: ProgressCallback): Promise<CompareResult> {
  if (!(Number.isInteger(threads) && threads >= 1)) throw new RangeError(`invalid number of threads: ${threads}`);
  const workers: Worker[] = [];
  const ports: MessagePort[] = [];
  const done = new Array<number>(threads).fill(0);
  try {
    const nulls = new Promise<NullMaxima[]>((resolve, reject) => {
      const parts: NullMaxima[] = [];
      for (let part = 1; part < threads; part++) {
        const w = new Worker(compareWorkerUrl());
        workers.push(w);
        const { port1, port2 } = new MessageChannel();
        ports.push(port1);
        w.on('error', reject);
        w.on('exit', (code) => reject(new Error(`compare worker ${part} exited with code ${code}`)));
        w.on('message', (m: CompareWorkReply) => {
          if (m.kind === 'error') reject(workerError(m));
          else if (parts.push(m.nulls) === threads - 1) resolve(parts);
        });
        w.postMessage({ contrast: c, assembled: assembly, part, parts: threads, progress: port2 } satisfies CompareWorkRequest, [port2]);
      }
      if (threads === 1) resolve(parts);
    });
    nulls.catch(() => {}); // awaited below, after this thread's share; a worker's failure is thrown there
    const p = prepareAssembled(c, assembly);
    const count = p.prepared.test.scheme.count;
    // the workers' progress, read from their ports; synchronously while this thread computes
    const report = () =>
      onProgress?.(
        done.reduce((a, b) => a + b, 0),
        count,
      );
    const drain = () =>
      ports.forEach((port, i) => {
        for (let m = receiveMessageOnPort(port); m; m = receiveMessageOnPort(port)) done[i + 1] = (m.message as { done: number }).done;
      });
    const own = runPermutations(p.prepared.test, permutationShare(count, 0, threads), (d) => {
      done[0] = d;
      drain();
      report();
    });
    ports.forEach((port, i) =>
      port.on('message', (m: { done: number }) => {
        done[i + 1] = m.done;
        report();
      }),
    );
    const others = await nulls;
    drain(); // each worker's last progress was posted before its null maxima
    report();
    return finishCompare(p, concatNullMaxima([own, ...others]));
  } finally {
    ports.forEach((port) => port.close());
    await Promise.all(workers.map((w) => w.terminate()));
  }
}
