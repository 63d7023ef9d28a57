/** Small scenarios for the simulator tests (each test overrides what it checks). */
import type { Scenario, ScoredStage } from '../../src/core/simulate/index.ts';
import { NightGenerator, planNight } from '../../src/core/simulate/index.ts';

export function baseScenario(overrides: Partial<Scenario> = {}): Scenario {
  return {
    name: 'test scenario',
    description: 'invented, for tests',
    seed: 11,
    epochS: 30,
    nightMin: 10,
    hypnogram: {
      wakeAtStartMin: 2,
      cycleMin: { N1: 1, N2: 3, N3: 2, N2late: 1, R: 2 },
      n3PerCycle: 0.7,
      rPerCycle: 1.3,
      jitter: 0.2,
      awakeningsPerHour: 2,
    },
    channels: ['F3', 'F4', 'Fz', 'C3', 'C4', 'Cz', 'P3', 'P4', 'Pz', 'O1', 'O2', 'M1', 'M2'],
    reference: { label: 'REF', site: 'Fpz' },
    highPassHz: 0.3,
    aperiodic: {
      W: { offset: 1.4, exponent: 1.5, knee: 0 },
      N1: { offset: 1.6, exponent: 1.8, knee: 0 },
      N2: { offset: 2.0, exponent: 2.2, knee: 0 },
      N3: { offset: 2.4, exponent: 2.6, knee: 0 },
      R: { offset: 1.6, exponent: 2.1, knee: 0 },
    },
    background: {
      sources: ['Fz', 'Cz', 'Pz', 'Oz', 'C5', 'C6'].map((site) => ({ site, widthDeg: 40, weight: 1 })),
      electrodeWeight: 0.25,
    },
    rhythms: [],
    variability: { offsetSd: 0, exponentSd: 0, rhythmAmplitudeSdLog10: 0, rhythmFrequencySdFraction: 0 },
    groups: [
      { name: 'control', codePrefix: 'ctl', size: 1, fsHz: 256, covariates: { ageMean: 40, ageSd: 10, femaleFraction: 0.5, scoreMean: 10, scoreSd: 3 } },
    ],
    effects: [],
    artifacts: [],
    startDate: '2023-01-02T23:00:00',
    scoreRange: [0, 40],
    ...overrides,
  };
}

export function fixedStages(stage: ScoredStage, epochs: number): Pick<Scenario, 'stages' | 'nightMin'> {
  return { stages: Array(epochs).fill(stage), nightMin: epochs / 2 };
}

/** The whole night of one subject as one Float64Array per channel (small nights only). */
export function generateNight(scenario: Scenario, subjectIndex = 0): { channels: string[]; fsHz: number; data: Float64Array[] } {
  const plan = planNight(scenario, subjectIndex);
  const gen = new NightGenerator(plan);
  const L = plan.epochSamples;
  const data = plan.channels.map(() => new Float64Array(L * plan.nEpochs));
  const out = plan.channels.map(() => new Float32Array(L));
  for (let e = 0; e < plan.nEpochs; e++) {
    gen.generate(e, out);
    out.forEach((o, c) => data[c].set(o, e * L));
  }
  return { channels: plan.channels, fsHz: plan.fsHz, data };
}
