/**
 * The scenario file format, checked with zod (types, ranges, unknown keys), then by the core's
 * checkScenario (names that must exist). Errors name the file, the field path and the value.
 */
import { z } from 'zod';
import { checkScenario, ScenarioError, type Scenario } from '../core/simulate/index.ts';

const stage = z.enum(['W', 'N1', 'N2', 'N3', 'R']);
const positive = z.number().positive();
const nonNegative = z.number().nonnegative();
const range = z.tuple([positive, positive]);
const perStage = z.partialRecord(stage, nonNegative);
const aperiodic = z.strictObject({ offset: z.number(), exponent: z.number(), knee: nonNegative.default(0) });

const rhythm = z.discriminatedUnion('kind', [
  z.strictObject({
    name: z.string().min(1),
    kind: z.literal('narrowband'),
    site: z.string(),
    widthDeg: positive,
    centerHz: positive,
    bandwidthHz: positive,
    rmsUv: perStage,
  }),
  z.strictObject({
    name: z.string().min(1),
    kind: z.literal('bursts'),
    site: z.string(),
    widthDeg: positive,
    centerHz: positive,
    amplitudeUv: nonNegative,
    durationS: range,
    burstFrequencySdHz: nonNegative,
    perMinute: perStage,
  }),
]);

const effect = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('offset'), group: z.string(), deltaLog10: z.number(), stages: z.array(stage).optional() }),
  z.strictObject({ kind: z.literal('exponent'), group: z.string(), delta: z.number(), stages: z.array(stage).optional() }),
  z.strictObject({ kind: z.literal('rhythm-amplitude'), group: z.string(), rhythm: z.string(), factor: nonNegative }),
  z.strictObject({ kind: z.literal('rhythm-frequency'), group: z.string(), rhythm: z.string(), shiftHz: z.number() }),
]);

const artifact = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.literal('mains'),
    subject: z.string(),
    frequencyHz: z.union([z.literal(50), z.literal(60)]),
    amplitudeUv: nonNegative,
    channels: z.union([z.literal('all'), z.array(z.string()).min(1)]),
  }),
  z.strictObject({ kind: z.literal('flat'), subject: z.string(), channel: z.string(), valueUv: z.number().default(0), noiseSdUv: nonNegative.default(0) }),
  z.strictObject({ kind: z.literal('movement'), subject: z.string(), epochFraction: z.number().min(0).max(1), rmsUv: positive, durationS: range }),
]);

const covariates = z.strictObject({
  ageMean: positive,
  ageSd: nonNegative,
  femaleFraction: z.number().min(0).max(1),
  scoreMean: z.number(),
  scoreSd: nonNegative,
});

export const scenarioSchema = z.strictObject({
  name: z.string().min(1),
  description: z.string(),
  seed: z.number().int(),
  epochS: positive.default(30),
  nightMin: positive,
  stages: z.array(stage).optional(),
  hypnogram: z.strictObject({
    wakeAtStartMin: nonNegative,
    cycleMin: z.strictObject({ N1: nonNegative, N2: nonNegative, N3: nonNegative, N2late: nonNegative, R: nonNegative }),
    n3PerCycle: nonNegative,
    rPerCycle: nonNegative,
    jitter: nonNegative,
    awakeningsPerHour: nonNegative,
  }),
  channels: z.array(z.string()).min(1),
  reference: z.strictObject({ label: z.string().min(1), site: z.string() }),
  highPassHz: positive.default(0.3),
  aperiodic: z.strictObject({ W: aperiodic, N1: aperiodic, N2: aperiodic, N3: aperiodic, R: aperiodic }),
  background: z.strictObject({
    sources: z.array(z.strictObject({ site: z.string(), widthDeg: positive, weight: nonNegative })),
    electrodeWeight: positive,
  }),
  rhythms: z.array(rhythm).default([]),
  variability: z.strictObject({
    offsetSd: nonNegative,
    exponentSd: nonNegative,
    rhythmAmplitudeSdLog10: nonNegative,
    rhythmFrequencySdFraction: nonNegative,
  }),
  groups: z
    .array(
      z.strictObject({
        name: z.string().min(1),
        codePrefix: z.string().min(1),
        size: z.number().int().positive(),
        fsHz: z.number().int().positive(),
        covariates,
      }),
    )
    .min(1),
  subjects: z.record(z.string(), z.strictObject({ fsHz: z.number().int().positive().optional() })).optional(),
  effects: z.array(effect).default([]),
  artifacts: z.array(artifact).default([]),
  startDate: z.string(),
  scoreRange: z.tuple([z.number(), z.number()]).default([0, 40]),
});

export class ScenarioFileError extends Error {
  constructor(
    readonly file: string,
    readonly problems: string[],
  ) {
    super(`${file}: invalid scenario:\n  ${problems.join('\n  ')}`);
    this.name = 'ScenarioFileError';
  }
}

/** Parses and checks a scenario; `source` names it in errors (a file path or 'scenario'). */
export function parseScenario(input: unknown, source: string): Scenario {
  const result = scenarioSchema.safeParse(input);
  if (!result.success) {
    throw new ScenarioFileError(
      source,
      result.error.issues.map((i) => `field '${i.path.join('.') || '(top level)'}': ${i.message}`),
    );
  }
  const scenario: Scenario = result.data;
  try {
    checkScenario(scenario);
  } catch (e) {
    if (e instanceof ScenarioError) throw new ScenarioFileError(source, [e.message]);
    throw e;
  }
  return scenario;
}
