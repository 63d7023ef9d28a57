/**
 * One simulation thread of `bandwise power` (power-threads.ts starts them): given the prepared
 * power (its reference rows in a SharedArrayBuffer, so every thread reads the one copy) and a list
 * of simulation jobs, runs each (src/core/planning runSimulation) and posts its outcome as it
 * finishes. A simulation depends only on (seed, n, k), so which thread runs it does not matter.
 */
import { parentPort } from 'node:worker_threads';
import { runSimulation, simulationJob, type PreparedPower, type SimulationOutcome } from '../core/planning/index.ts';

export interface PowerWorkRequest {
  prepared: PreparedPower;
  jobs: number[];
}

export type PowerWorkReply =
  { kind: 'outcome'; job: number; outcome: SimulationOutcome } | { kind: 'done' } | { kind: 'error'; name: string; message: string; stack?: string };

if (!parentPort) throw new Error('src/analysis/power-worker.ts must run in a worker thread');
const port = parentPort;
const post = (m: PowerWorkReply) => port.postMessage(m);

port.on('message', (req: PowerWorkRequest) => {
  try {
    for (const job of req.jobs) {
      const { n, k } = simulationJob(req.prepared.plan, job);
      post({ kind: 'outcome', job, outcome: runSimulation(req.prepared, n, k) });
    }
    post({ kind: 'done' });
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    post({ kind: 'error', name: err.name, message: err.message, stack: err.stack });
  }
});
