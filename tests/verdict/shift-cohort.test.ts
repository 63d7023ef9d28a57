/**
 * A planted spindle-frequency shift, end to end: a scenario file with the `rhythm-frequency`
 * effect (patients' fast spindles 1 Hz slower, same amplitude, same aperiodic background) is
 * generated as EDF+ recordings, ingested with the default parameters, and the `band-check`
 * command over C3, C4, P3, P4 in sigma 11–16 Hz must name the shift: band-specific with the
 * frequency shift as (part of) its periodic kind, the sentence saying how far the peak moved.
 * The outside reference is what the scenario planted (13.5 Hz in controls, 12.5 Hz in patients,
 * between-subject SD 2.5 % of the centre); the group means of the fitted centres must lie within
 * 0.3 Hz of it (Welch bins of 0.5 Hz with 2-s segments; the fit interpolates between bins).
 * Size: 8 + 8 subjects, 10 min of N2 each at 128 Hz, 4 channels (tests/helpers/shift-cohort.ts);
 * 1000 permutations per test.
 */
import { readFileSync, rmSync } from 'node:fs';
import path from 'node:path';
import { Command } from 'commander';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { register as registerBandCheck } from '../../src/cli/band-check.ts';
import type { BandCheckRun } from '../../src/analysis/band-check-runner.ts';
import { shiftCohortDatabase } from '../helpers/shift-cohort.ts';

let dir = '';
let db = '';

beforeAll(async () => {
  ({ dir, db } = await shiftCohortDatabase());
}, 600_000);

afterAll(() => {
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('a planted spindle-frequency shift through simulate, ingest and band-check', () => {
  it('sigma 11–16 Hz over C3, C4, P3, P4: band-specific, the shift named with the planted size', async () => {
    const out = path.join(dir, 'sigma.json');
    const program = new Command().exitOverride();
    registerBandCheck(program);
    const args = [
      'band-check',
      db,
      '--groups',
      'control,patient',
      '--stage',
      'N2',
      '--channels',
      'C3,C4,P3,P4',
      '--band',
      'sigma:11-16',
      '--permutations',
      '1000',
      '--seed',
      '1',
      '--quiet',
      '--out',
      out,
      '--ledger',
      path.join(dir, 'ledger.jsonl'),
    ];
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
