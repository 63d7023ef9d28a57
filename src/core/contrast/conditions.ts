/** The conditions a contrast compares within a subject: (stage, session) pairs, named. Pure. */
import type { Stage } from '../stages.ts';
import type { Contrast } from './spec.ts';

export interface Condition {
  stage: Stage;
  /** the session asked for; null: the subject's only one */
  session: string | null;
  name: string;
}

/** One condition for groups/covariate designs, two for paired (stages or sessions). */
export function contrastConditions(c: Contrast): Condition[] {
  if (c.design === 'paired' && c.stages) return c.stages.map((s) => ({ stage: s, session: c.session ?? null, name: s }));
  if (c.design === 'paired' && c.sessions) return c.sessions.map((s) => ({ stage: c.stage, session: s, name: `session ${s}` }));
  return [{ stage: c.stage, session: c.session ?? null, name: c.stage }];
}
