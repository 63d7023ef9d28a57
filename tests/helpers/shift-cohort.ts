/**
 * An invented cohort with a planted spindle-frequency shift, generated and ingested once per test
 * file: the scenario's `rhythm-frequency` effect moves the patients' fast spindles 1 Hz lower
 * (12.5 instead of 13.5 Hz) with the same amplitude and the same aperiodic background. 8 + 8
 * subjects, 10 min of N2 each at 128 Hz, channels C3, C4, P3, P4; ingest's default parameters.
 */
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { writeSimulatedCohort } from '../../src/simulation/index.ts';
import { runIngest } from '../../ingest/run.ts';
import { resolveIngestParams } from '../../ingest/pipeline.ts';

const covariates = { ageMean: 40, ageSd: 10, femaleFraction: 0.5, scoreMean: 10, scoreSd: 3 };

/** Invented scenario: the demo's background and spindles, fewer subjects and channels, a short all-N2 night. */
export const SCENARIO = {
  name: 'spindle frequency shift (invented)',
  description:
    'Invented: 8 controls and 8 patients, 10 min of N2; patients’ fast spindles are 1 Hz slower (12.5 instead of 13.5 Hz) with the same amplitude; nothing else differs.',
  seed: 4242,
  nightMin: 10,
  stages: Array(20).fill('N2'),
  hypnogram: { wakeAtStartMin: 0, cycleMin: { N1: 1, N2: 10, N3: 1, N2late: 1, R: 1 }, n3PerCycle: 1, rPerCycle: 1, jitter: 0, awakeningsPerHour: 0 },
  channels: ['C3', 'C4', 'P3', 'P4'],
  reference: { label: 'REF', site: 'Fpz' },
  aperiodic: {
    W: { offset: 1.4, exponent: 1.5 },
    N1: { offset: 1.6, exponent: 1.8 },
    N2: { offset: 2.0, exponent: 2.2 },
    N3: { offset: 2.4, exponent: 2.6 },
    R: { offset: 1.6, exponent: 2.1 },
  },
  background: { sources: ['Fz', 'Cz', 'Pz', 'Oz', 'C5', 'C6'].map((site) => ({ site, widthDeg: 40, weight: 1 })), electrodeWeight: 0.25 },
  rhythms: [
    {
      name: 'fast-spindle',
      kind: 'bursts',
      site: 'CPz',
      widthDeg: 50,
      centerHz: 13.5,
      amplitudeUv: 18,
      durationS: [0.5, 2],
      burstFrequencySdHz: 0.3,
      perMinute: { N2: 6 },
    },
  ],
  variability: { offsetSd: 0.1, exponentSd: 0.08, rhythmAmplitudeSdLog10: 0.1, rhythmFrequencySdFraction: 0.025 },
  groups: [
    { name: 'control', codePrefix: 'ctl', size: 8, fsHz: 128, covariates },
    { name: 'patient', codePrefix: 'pat', size: 8, fsHz: 128, covariates },
  ],
  effects: [{ kind: 'rhythm-frequency', group: 'patient', rhythm: 'fast-spindle', shiftHz: -1 }],
  startDate: '2024-05-06T23:00:00',
};

/** Generates and ingests the cohort into a new temporary folder; returns the folder and the database path. */
export async function shiftCohortDatabase(): Promise<{ dir: string; db: string }> {
  const dir = mkdtempSync(path.join(tmpdir(), 'bw-shift-'));
  const files = await writeSimulatedCohort(SCENARIO, path.join(dir, 'cohort'));
  const db = path.join(dir, 'shift.duckdb');
  const summary = await runIngest(files.participantsPath, db, { jobs: 2, params: resolveIngestParams({}) });
  if (summary.failed.length > 0) throw new Error(summary.failed.map((f) => f.message).join('; '));
  return { dir, db };
}
