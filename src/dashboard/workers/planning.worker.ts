// Runs a power simulation (its share of the simulations) or a deviation off the page's thread, with
// src/core/planning. Progress goes back at most every 50 ms; the page cancels by terminating.
import {
  fitDeviation,
  deviationResult,
  jobCount,
  powerResult,
  preparePower,
  referenceBand,
  runSimulation,
  simulationJob,
  type PreparedPower,
  type SimulationOutcome,
} from '../../core/planning/index.ts';
import type { PlanningReply, PlanningRequest } from './planning-protocol.ts';

const post = (m: PlanningReply) => (self as unknown as Worker).postMessage(m);

/** part 0's prepared power and own outcomes, waiting for the other parts' */
let waiting: { prepared: PreparedPower; own: [number, SimulationOutcome][]; t0: number } | null = null;

function finish(prepared: PreparedPower, outcomes: [number, SimulationOutcome][], t0: number): void {
  const all = new Array<SimulationOutcome>(jobCount(prepared.plan));
  for (const [job, o] of outcomes) all[job] = o;
  post({ kind: 'power', result: powerResult(prepared, all), seconds: (performance.now() - t0) / 1000 });
}

self.onmessage = (e: MessageEvent<PlanningRequest>) => {
  const req = e.data;
  const t0 = performance.now();
  try {
    if (req.kind === 'power') {
      const prepared = preparePower(req.contrast, req.plan, req.data);
      const jobs: number[] = [];
      for (let j = req.part; j < jobCount(req.plan); j += req.parts) jobs.push(j);
      const own: [number, SimulationOutcome][] = [];
      let last = 0;
      for (const job of jobs) {
        const { n, k } = simulationJob(req.plan, job);
        own.push([job, runSimulation(prepared, n, k)]);
        const now = performance.now();
        if (now - last >= 50 || own.length === jobs.length) {
          last = now;
          post({ kind: 'progress', done: own.length, total: jobs.length });
        }
      }
      if (req.part !== 0) post({ kind: 'outcomes', outcomes: own });
      else if (req.parts === 1) finish(prepared, own, t0);
      else waiting = { prepared, own, t0 };
    } else if (req.kind === 'outcomes') {
      if (waiting === null) throw new Error('outcomes arrived before this part finished');
      const { prepared, own, t0: started } = waiting;
      waiting = null;
      finish(prepared, [...own, ...req.outcomes], started);
    } else {
      const model = fitDeviation(req.spec, req.data);
      const index = req.subject === null ? -1 : model.matrix.subjects.findIndex((s) => s.subject === req.subject);
      post({
        kind: 'deviation',
        answer: { result: deviationResult(req.spec, model), subject: index >= 0 ? req.subject : null, band: index >= 0 ? referenceBand(model, index) : null },
        seconds: (performance.now() - t0) / 1000,
      });
    }
  } catch (err) {
    post({ kind: 'error', message: err instanceof Error ? err.message : String(err) });
  }
};
