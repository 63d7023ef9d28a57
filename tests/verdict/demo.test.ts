/**
 * The band check on the ingested demo cohort (demo-cohort/scenario.json plants a broadband
 * aperiodic offset increase in patients and a reduced fast-spindle peak over centro-parietal
 * channels in N2), through the commands as a user runs them: `band-check` writes the result and
 * adds one ledger entry per run; `report` writes the methods with the database's own counts.
 * The planted effects (the scenario file) are the outside reference for the verdicts; the
 * rejected share in the report is checked against a direct count of the stored rows.
 * First run: generating and ingesting the demo takes minutes; later runs reuse the database
 * (tests/verdict/demo-db.ts). 1000 permutations per test.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Command } from 'commander';
import { register as registerBandCheck } from '../../src/cli/band-check.ts';
import { register as registerReport } from '../../src/cli/report.ts';
import { readLedger } from '../../src/analysis/ledger.ts';
import { openStore } from '../../ingest/store/index.ts';
import type { BandCheckRun } from '../../src/analysis/band-check-runner.ts';
import { demoDatabase } from '../helpers/demo-db.ts';

let db = '';
let dir = '';

async function cli(args: string[]): Promise<void> {
  const program = new Command().exitOverride();
  registerBandCheck(program);
  registerReport(program);
  await program.parseAsync(['node', 'bandwise', ...args]);
}

beforeAll(async () => {
  db = await demoDatabase();
  dir = mkdtempSync(path.join(tmpdir(), 'bw-verdict-'));
}, 1_800_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

const common = ['--groups', 'control,patient', '--stage', 'N2', '--permutations', '1000', '--seed', '1', '--quiet'];

describe('band check on the demo cohort', () => {
  it('theta in N2 (all channels): broadband offset shift, not band-specific; sigma over C3,C4,Cz,P3,P4,Pz: band-specific', async () => {
    const ledger = path.join(dir, 'ledger.jsonl');
    const theta = path.join(dir, 'theta.json');
    const sigma = path.join(dir, 'sigma.json');
    await cli(['band-check', db, ...common, '--band', 'theta', '--out', theta, '--ledger', ledger]);
    expect(readLedger(ledger)).toHaveLength(1);
    await cli(['band-check', db, ...common, '--channels', 'C3,C4,Cz,P3,P4,Pz', '--band', '12-16', '--out', sigma, '--ledger', ledger]);
    expect(readLedger(ledger)).toHaveLength(2);
    const t = JSON.parse(readFileSync(theta, 'utf8')) as BandCheckRun;
    const s = JSON.parse(readFileSync(sigma, 'utf8')) as BandCheckRun;
    expect(t.verdict).toBe('broadband-offset');
    expect(t.tests.offset.effect).toBeGreaterThan(0); // planted: patients' offset +0.15 log10
    expect(s.verdict).toBe('band-specific');
    expect(s.tests.periodic.effect).toBeLessThan(0); // planted: patients' fast spindles at half amplitude
    // the spindles' frequency is not changed in the scenario: a power change, no shift named
    expect(s.periodicKind).toBe('power');
    expect(s.family.find((f) => f.test === 'peakCenter')!.passed).toBe(false);
    expect(s.sentence).not.toContain('peak is');
    // planted fast-spindle centre 13.5 Hz (between-subject SD 2.5 %): each group's mean fitted centre within 0.3 Hz
    for (const m of s.peakCenter.means) expect(Math.abs(m.centerHz - 13.5), m.name).toBeLessThan(0.3);
    // N2 has no theta rhythm in the scenario: no fitted theta peaks, the centre test says it could not run
    expect(t.tests.peakCenter).toBeNull();
    expect(t.peakCenter.skipped).toMatch(/^too few subjects with a fitted peak in theta 4–8 Hz/);
    expect(s.channels).toEqual(['C3', 'C4', 'Cz', 'P3', 'P4', 'Pz']);
    expect(s.fitRangeHz).toEqual([1, 40]); // the stored fit range (ingest default)
    expect(readLedger(ledger).map((e) => e.kind)).toEqual(['band-check', 'band-check']);
  }, 300_000);

  it('report: methods with the database facts; rejected share equals a direct count', async () => {
    const ledger = path.join(dir, 'ledger.jsonl');
    const out = path.join(dir, 'methods.md');
    await cli(['report', path.join(dir, 'sigma.json'), '--out', out, '--database', db, '--ledger', ledger]);
    const text = readFileSync(out, 'utf8');
    const params = JSON.parse(readFileSync(path.join(dir, 'methods.json'), 'utf8'));
    const store = await openStore(db, { readOnly: true });
    let counts: { rejected: number; total: number };
    try {
      const q = async (sql: string) => Number((await store.connection.runAndReadAll(sql)).getRowObjectsJS()[0].n);
      counts = {
        // rejections of the recorded channels (the channels table), as the report counts them
        rejected: await q(
          "SELECT count(*) AS n FROM epoch_rejections x, epochs e WHERE x.recording_id = e.recording_id AND x.epoch = e.epoch AND e.stage = 'N2' AND x.reference = 'recorded'",
        ),
        total: await q(
          "SELECT sum(c.k) AS n FROM epochs e, (SELECT recording_id, count(*) AS k FROM channels GROUP BY recording_id) c WHERE e.recording_id = c.recording_id AND e.stage = 'N2' AND e.drop_reason IS NULL",
        ),
      };
    } finally {
      await store.close();
    }
    expect(text).toContain(`In N2, ${counts.rejected} of ${counts.total} channel-epochs`);
    expect(text).toContain('sampling rates 128, 256 Hz');
    expect(text).toContain('records 2 distinct analyses (2 band-check;');
    expect(text).toContain('Verdict: **band-specific**');
    expect(params.ingest.references).toEqual(['recorded', 'linked-mastoids']);
    // the report is recorded, but not counted as an analysis
    expect(readLedger(ledger).map((e) => e.kind)).toEqual(['band-check', 'band-check', 'report']);
  }, 120_000);
});
