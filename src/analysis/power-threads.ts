/**
 * `bandwise power`'s simulations on several threads (node:worker_threads). Whole simulations are
 * spread over the threads — job j to thread j mod T — rather than one simulation's permutations:
 * a simulated study is a small contrast (2n subjects; well under compare's threshold for
 * splitting permutations, compare-threads.ts), whose permutations split over threads would make
 * every thread prepare the same statistics and wait for the others once per simulation (measured
 * at load 14 on 2 cores: one 13-channel contrast through compareOnThreads took 3.6 s wall on two
 * threads, 0.34 s on one), while whole simulations need no exchange but their outcomes. The reference rows go to shared memory
 * once. The main thread only collects outcomes and reports progress; with one thread everything
 * runs here and no worker starts.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { jobCount, runSimulation, simulationJob, type PreparedPower, type SimulationOutcome } from '../core/planning/index.ts';
import { PlanningInputError } from '../core/planning/index.ts';
import type { PowerWorkReply, PowerWorkRequest } from './power-worker.ts';
import { powerWorkerUrl } from './power-worker-url.ts';

/**
 * Below this many subject-points × permutations over all simulations (about 2 s on one core
 * here) a second thread's start with the TypeScript loader takes much of what it saves.
 */
const THREADED_WORK = 2e9;

/** Work of all simulations: Σ over n of K × 2n subjects × points × (permutations + 1). */
export function powerWork(p: PreparedPower): number {
  const perms = p.contrast.correction === 'none' ? 0 : p.contrast.permutations;
  return p.plan.nPerGroup.reduce((sum, n) => sum + p.plan.simulations * 2 * n * p.reference.nPoints * (perms + 1), 0);
}

/** Threads worth using: the machine's cores for a large simulation, else 1. */
export function defaultPowerThreads(p: PreparedPower): number {
  return powerWork(p) >= THREADED_WORK ? Math.min(availableParallelism(), jobCount(p.plan)) : 1;
}

function sharedRows(p: PreparedPower): PreparedPower {
  const d = p.reference.data;
  const copy = d instanceof Float32Array ? new Float32Array(new SharedArrayBuffer(d.byteLength)) : new Float64Array(new SharedArrayBuffer(d.byteLength));
  copy.set(d);
  return { ...p, reference: { ...p.reference, data: copy } };
}

function workerError(m: Extract<PowerWorkReply, { kind: 'error' }>): Error {
  const e = m.name === 'PlanningInputError' ? new PlanningInputError(m.message) : new Error(m.message);
  if (m.name !== 'PlanningInputError') e.name = m.name;
  if (m.stack) e.stack = m.stack;
  return e;
}

/** Every simulation's outcome, indexed by job (simulationJob), on `threads` threads. onProgress(done, total) as they finish. */
export async function simulateOnThreads(p: PreparedPower, threads: number, onProgress?: (done: number, total: number) => void): Promise<SimulationOutcome[]> {
  if (!(Number.isInteger(threads) && threads >= 1)) throw new RangeError(`invalid number of threads: ${threads}`);
  const total = jobCount(p.plan);
  const outcomes = new Array<SimulationOutcome>(total);
  if (threads === 1) {
    for (let j = 0; j < total; j++) {
      const { n, k } = simulationJob(p.plan, j);
      outcomes[j] = runSimulation(p, n, k);
      onProgress?.(j + 1, total);
    }
    return outcomes;
  }
  const shared = sharedRows(p);
  const workers: Worker[] = [];
  let done = 0;
  try {
    await new Promise<void>((resolve, reject) => {
      let finished = 0;
      for (let t = 0; t < threads; t++) {
        const jobs: number[] = [];
        for (let j = t; j < total; j += threads) jobs.push(j);
        const w = new Worker(powerWorkerUrl());
        workers.push(w);
        w.on('error', reject);
        w.on('exit', (code) => reject(new Error(`power worker ${t} exited with code ${code}`)));
        w.on('message', (m: PowerWorkReply) => {
          if (m.kind === 'error') reject(workerError(m));
          else if (m.kind === 'outcome') {
            outcomes[m.job] = m.outcome;
            onProgress?.(++done, total);
          } else if (++finished === threads) resolve();
        });
        w.postMessage({ prepared: shared, jobs } satisfies PowerWorkRequest);
      }
    });
  } finally {
    await Promise.all(workers.map((w) => w.terminate()));
  }
  return outcomes;
}
