/** The ground truth of a whole scenario: one JSON-able object of everything planted. */
import { listSubjects } from './subjects.ts';
import { planNight } from './plan.ts';
import type { EffectSpec, Scenario } from './scenario.ts';
import type { SubjectTruth } from './truth.ts';

export interface CohortTruth {
  scenario: string;
  description: string;
  seed: number;
  model: string;
  channels: string[];
  reference: { label: string; site: string };
  effects: EffectSpec[];
  subjects: SubjectTruth[];
}

const MODEL_TEXT =
  'recorded_c(t) = V_c(t) − V_ref(t) + artifacts; V_e = Σ_s g_s(e)·S_s + N_e + Σ_r g_r(e)·R_r with ' +
  'g = exp(−d²/(2σ²)) over the angular distance d on the unit sphere. Aperiodic density of each ' +
  'channel 10^(offset − log10(knee + f^exponent)) µV²/Hz (log10 µV²/Hz; rolls off as f² below the ' +
  'high-pass frequency); peaks: heightLog10 = log10(1 + rhythm density / aperiodic density) at the centre.';

/** The scenario's truth with the given subjects (a cohort being written adds them one by one). */
export function truthOf(scenario: Scenario, subjects: SubjectTruth[]): CohortTruth {
  return {
    scenario: scenario.name,
    description: scenario.description,
    seed: scenario.seed,
    model: MODEL_TEXT,
    channels: [...scenario.channels],
    reference: { ...scenario.reference },
    effects: scenario.effects,
    subjects,
  };
}

export function groundTruth(scenario: Scenario): CohortTruth {
  return truthOf(
    scenario,
    listSubjects(scenario).map((s) => planNight(scenario, s.index).truth),
  );
}
