/**
 * A planted spindle-frequency shift, end to end: a scenario file with the `rhythm-frequency`
 * effect (patients' fast spindles 1 Hz slower, same amplitude, same aperiodic background) is
 * generated as EDF+ recordings, ingested with the default parameters, and the `band-check`
 * command over C3, C4, P3, P4 in sigma 11–16 Hz must name the shift: band-specific with the
 * frequency shift as (part of) its periodic kind, the sentence saying how far the peak moved.
 * The outside reference is what the scenario planted (13.5 Hz in controls, 12.5 Hz in patients,
 * between-subject SD 2.5 % of the centre); the group means of the fitted centres must lie within
 * 0.3 Hz of it (Welch bins of 0.5 Hz with 2-s segments; the fit interpolates between bins).
 * Size: 8 + 8 subjects, 10 min of N2 each at 128 Hz, 4 channels; 1000 permutations per test.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Command } from 'commander';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { register as registerBandCheck } from '../../src/cli/band-check.ts';
import type { BandCheckRun } from '../../src/analysis/band-check-runner.ts';
import { writeSimulatedCohort } from '../../src/simulation/index.ts';
import { runIngest } from '../../ingest/run.ts';
import { resolveIngestParams } from '../../ingest/pipeline.ts';

const covariates = { ageMean: 40, ageSd: 10, femaleFraction: 0.5, scoreMean: 10, scoreSd: 3 };

/** Invented scenario: the demo's background and spindles, fewer subjects and channels, a short all-N2 night. */
const SCENARIO = {
  name: 'spindle frequency shift (invented)',
  description: 'Invented: 8 controls and 8 patients, 10 min of N2; patients’ fast spindles are 1 Hz slower (12.5 instead of 13.5 Hz) with the same amplitude; nothing else differs.',
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
  rhythms: [{ name: 'fast-spindle', kind: 'bursts', site: 'CPz', widthDeg: 50, centerHz: 13.5, amplitudeUv: 18, durationS: [0.5, 2], burstFrequencySdHz: 0.3, perMinute: { N2: 6 } }],
  variability: { offsetSd: 0.1, exponentSd: 0.08, rhythmAmplitudeSdLog10: 0.1, rhythmFrequencySdFraction: 0.025 },
  groups: [
    { name: 'control', codePrefix: 'ctl', size: 8, fsHz: 128, covariates },
    { name: 'patient', codePrefix: 'pat', size: 8, fsHz: 128, covariates },
  ],
  effects: [{ kind: 'rhythm-frequency', group: 'patient', rhythm: 'fast-spindle', shiftHz: -1 }],
  startDate: '2024-05-06T23:00:00',
};

let dir = '';
let db = '';

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'bw-shift-'));
  const files = await writeSimulatedCohort(SCENARIO, path.join(dir, 'cohort'));
  db = path.join(dir, 'shift.duckdb');
  const summary = await runIngest(files.participantsPath, db, { jobs: 2, params: resolveIngestParams({}) });
  if (summary.failed.length > 0) throw new Error(summary.failed.map((f) => f.message).join('; '));
}, 600_000);

afterAll(() => {
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('a planted spindle-frequency shift through simulate, ingest and band-check', () => {
  it('sigma 11–16 Hz over C3, C4, P3, P4: band-specific, the shift named with the planted size', async () => {
    const out = path.join(dir, 'sigma.json');
    const program = new Command().exitOverride();
    registerBandCheck(program);
    const args = ['band-check', db, '--groups', 'control,patient', '--stage', 'N2', '--channels', 'C3,C4,P3,P4', '--band', 'sigma:11-16', '--permutations', '1000', '--seed', '1', '--quiet', '--out', out, '--ledger', path.join(dir, 'ledger.jsonl')];
    await program.parseAsync(['node', 'bandwise', ...args]);
    const r = JSON.parse(readFileSync(out, 'utf8')) as BandCheckRun;
    expect(r.verdict).toBe('band-specific');
    expect(['frequency-shift', 'power-and-frequency-shift']).toContain(r.periodicKind);
    expect(r.family.find((f) => f.test === 'peakCenter')!.passed).toBe(true);
    expect(r.sentence).toMatch(/the sigma peak is (0\.[7-9]|1\.[0-3]) Hz lower in patient than in control/);
    const mean = Object.fromEntries(r.peakCenter.means.map((m) => [m.name, m.centerHz]));
    expect(Math.abs(mean.control - 13.5)).toBeLessThan(0.3);
    expect(Math.abs(mean.patient - 12.5)).toBeLessThan(0.3);
    // the aperiodic background is the same in both groups
    expect(r.family.find((f) => f.test === 'offset')!.passed).toBe(false);
    expect(r.family.find((f) => f.test === 'exponent')!.passed).toBe(false);
  }, 300_000);
});
