// The page's side of the planning workers: a power run over one or two workers (simulations split
// between them, progress summed; part 0 writes the result once the page hands it the other
// part's outcomes), a deviation in one worker; cancel terminates them.
import type { ContrastData } from '../../core/contrast/data.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { DeviationSpec, PowerPlan, PowerResult, SimulationOutcome } from '../../core/planning/index.ts';
import type { DeviationAnswer, PlanningReply, PlanningRequest } from './planning-protocol.ts';

export class PlanningCancelled extends Error {
  override name = 'PlanningCancelled';
}

export interface RunningPlanning<T> {
  result: Promise<{ result: T; seconds: number }>;
  cancel(): void;
}

/** Workers for a power run: two where the machine has two cores or more (each holds a copy of the rows read). */
function powerWorkerCount(): number {
  return (globalThis.navigator?.hardwareConcurrency ?? 1) >= 2 ? 2 : 1;
}

function start<T>(
  requests: PlanningRequest[],
  onProgress: (done: number, total: number) => void,
  pick: (m: PlanningReply) => { result: T; seconds: number } | null,
): RunningPlanning<T> {
  const workers = requests.map(() => new Worker(new URL('./planning.worker.ts', import.meta.url), { type: 'module' }));
  const stop = () => workers.forEach((w) => w.terminate());
  const done = new Array<number>(workers.length).fill(0);
  const total = new Array<number>(workers.length).fill(0);
  const others: [number, SimulationOutcome][] = [];
  let reported = 0;
  let settle: ((e: Error) => void) | null = null;
  const result = new Promise<{ result: T; seconds: number }>((resolve, reject) => {
    settle = (e) => {
      stop();
      reject(e);
    };
    workers.forEach((worker, part) => {
      worker.onmessage = (e: MessageEvent<PlanningReply>) => {
        const m = e.data;
        if (m.kind === 'progress') {
          done[part] = m.done;
          total[part] = m.total;
          onProgress(
            done.reduce((a, b) => a + b, 0),
            total.reduce((a, b) => a + b, 0),
          );
        } else if (m.kind === 'outcomes') {
          others.push(...m.outcomes);
          worker.terminate();
          if (++reported === workers.length - 1) workers[0].postMessage({ kind: 'outcomes', outcomes: others } satisfies PlanningRequest);
        } else if (m.kind === 'error') settle!(new Error(m.message));
        else {
          const r = pick(m);
          stop();
          if (r === null) reject(new Error(`the planning worker answered ${m.kind}`));
          else resolve(r);
        }
      };
      worker.onerror = (e) => settle!(new Error(e.message || 'the planning worker failed'));
    });
  });
  workers.forEach((w, i) => w.postMessage(requests[i]));
  return { result, cancel: () => settle?.(new PlanningCancelled('cancelled')) };
}

export function startPower(
  contrast: Contrast,
  plan: PowerPlan,
  data: ContrastData,
  onProgress: (done: number, total: number) => void,
  parts = powerWorkerCount(),
): RunningPlanning<PowerResult> {
  const requests: PlanningRequest[] = Array.from({ length: parts }, (_, part) => ({ kind: 'power', contrast, plan, data, part, parts }));
  return start(requests, onProgress, (m) => (m.kind === 'power' ? { result: m.result, seconds: m.seconds } : null));
}

export function startDeviation(spec: DeviationSpec, data: ContrastData, subject: string | null): RunningPlanning<DeviationAnswer> {
  return start(
    [{ kind: 'deviation', spec, data, subject }],
    () => {},
    (m) => (m.kind === 'deviation' ? { result: m.answer, seconds: m.seconds } : null),
  );
}
