/** The subjects of a scenario: codes, groups, sampling rates and covariates, in a fixed order. */
import type { Scenario } from './scenario.ts';
import { STREAM, streamRandom } from './seeds.ts';

export interface SimulatedSubject {
  /** Index over all subjects of the scenario (groups in order). */
  index: number;
  code: string;
  group: string;
  fsHz: number;
  age: number;
  sex: 'F' | 'M';
  score: number;
}

export function subjectCode(prefix: string, number: number): string {
  return `${prefix}${String(number).padStart(2, '0')}`;
}

export function listSubjects(scenario: Scenario): SimulatedSubject[] {
  const out: SimulatedSubject[] = [];
  let index = 0;
  for (const group of scenario.groups) {
    for (let i = 1; i <= group.size; i++, index++) {
      const code = subjectCode(group.codePrefix, i);
      const rng = streamRandom(scenario.seed, STREAM.covariates, index);
      const c = group.covariates;
      const age = Math.max(18, Math.min(90, Math.round(c.ageMean + c.ageSd * rng.normal())));
      const sex = rng.uniform() < c.femaleFraction ? 'F' : 'M';
      const [lo, hi] = scenario.scoreRange;
      const score = Math.max(lo, Math.min(hi, Math.round(c.scoreMean + c.scoreSd * rng.normal())));
      const fsHz = scenario.subjects?.[code]?.fsHz ?? group.fsHz;
      out.push({ index, code, group: group.name, fsHz, age, sex, score });
    }
  }
  return out;
}
