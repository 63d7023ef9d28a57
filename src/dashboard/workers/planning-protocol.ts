// Messages between the power and deviation views and their workers (workers/planning.worker.ts).
// A power run spreads its simulations over `parts` workers (simulation j to part j mod parts, as
// the command line spreads them over threads); part 0 gets the others' outcomes from the page and
// writes the result. A deviation runs in one worker and answers with the scores and the chosen
// subject's reference band.
import type { ContrastData } from '../../core/contrast/data.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { DeviationResult, DeviationSpec, PowerPlan, PowerResult, ReferenceBand, SimulationOutcome } from '../../core/planning/index.ts';

export interface PowerRequest {
  kind: 'power';
  contrast: Contrast;
  plan: PowerPlan;
  data: ContrastData;
  part: number;
  parts: number;
}

/** To part 0: the other parts' outcomes, [job, outcome]. */
export interface OutcomesRequest {
  kind: 'outcomes';
  outcomes: [number, SimulationOutcome][];
}

export interface DeviationRequest {
  kind: 'deviation';
  spec: DeviationSpec;
  data: ContrastData;
  /** the subject whose reference band is drawn (null: none) */
  subject: string | null;
}

export type PlanningRequest = PowerRequest | OutcomesRequest | DeviationRequest;

/** The deviation view's answer: the scores of every subject and the chosen subject's band. */
export interface DeviationAnswer {
  result: DeviationResult;
  /** the scored subject the band belongs to (null: none asked, or not scored) */
  subject: string | null;
  band: ReferenceBand | null;
}

export type PlanningReply =
  | { kind: 'progress'; done: number; total: number }
  | { kind: 'outcomes'; outcomes: [number, SimulationOutcome][] }
  | { kind: 'power'; result: PowerResult; seconds: number }
  | { kind: 'deviation'; answer: DeviationAnswer; seconds: number }
  | { kind: 'error'; message: string };
