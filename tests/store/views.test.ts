// The tidy views (ingest/store/views.ts) on the fixture database (tests/fixtures/make-fixture-db.ts),
// checked against numpy on the stored rows, and `bandwise cohort-table` (a Table 1 by group as
// TSV) against numpy means and sample standard deviations (ddof = 1, common practice for a
// Table 1) of the same participants and recordings.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance, type DuckDBConnection } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FIXTURE_PARTICIPANTS, makeFixtureDb } from '../fixtures/make-fixture-db.ts';
import { runPython } from '../helpers/python.ts';

// the command from its sources (bin/run-ts.mjs runs src/cli/main.ts through tsx)
const cli = [path.join(import.meta.dirname, '..', '..', 'bin', 'run-ts.mjs'), path.join(import.meta.dirname, '..', '..', 'src', 'cli', 'main.ts')];
let dir = '';
let db = '';
let instance: DuckDBInstance;
let conn: DuckDBConnection;
const rows = async (sql: string) => (await conn.runAndReadAll(sql)).getRowObjectsJS() as Record<string, unknown>[];

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'bw-views-'));
  db = path.join(dir, 'fixture.duckdb');
  await makeFixtureDb(db);
  instance = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  conn = await instance.connect();
}, 120_000);
afterAll(() => {
  conn?.closeSync();
  instance?.closeSync();
  rmSync(dir, { recursive: true, force: true });
});

describe('tidy views', () => {
  it('tidy_band_power is the mean density over the bins lo ≤ f ≤ hi of each stored spectrum (numpy)', async () => {
    const got =
      await rows(`SELECT b.subject, b.channel, b.stage, b.band, b.lo_hz, b.hi_hz, b.power, b.log10_power, s.power AS psd, s.freq_start_hz, s.freq_step_hz
      FROM tidy_band_power b JOIN spectra s USING (recording_id, channel, stage, reference, averaging)
      WHERE b.subject = 'sub-01' AND b.channel = 'C3' ORDER BY b.stage, b.lo_hz, b.hi_hz`);
    // the six default bands (src/core/spectrum/bands.ts) per stored stage; the fixture stops at 30 Hz, so broadband is 0.5–30 Hz there
    expect(new Set(got.map((r) => r.band))).toEqual(new Set(['delta', 'theta', 'alpha', 'sigma', 'beta', 'broadband']));
    for (const r of got) {
      const psd = r.psd as number[];
      const ref = runPython<number>(
        `p = numpy.fromfile(inputs['p'])\nf = ${Number(r.freq_start_hz)} + ${Number(r.freq_step_hz)} * numpy.arange(len(p))\n` +
          `m = (f >= ${Number(r.lo_hz)} - 1e-9) & (f <= ${Number(r.hi_hz)} + 1e-9)\nprint(json.dumps(float(p[m].mean())))`,
        { p: psd },
      );
      expect(Number(r.power), `${r.stage} ${r.band}`).toBeCloseTo(ref, 9);
      expect(Number(r.log10_power)).toBeCloseTo(Math.log10(ref), 9);
    }
  });

  it('tidy_aperiodic names the offset aperiodic_offset; tidy_sleep_architecture carries the AASM minutes and clean N2 minutes (numpy median)', async () => {
    const ap = await rows(
      `SELECT t.aperiodic_offset, a."offset" AS stored, t.exponent, a.exponent AS e2 FROM tidy_aperiodic t JOIN aperiodic a USING (recording_id, channel, stage, reference, averaging, method)`,
    );
    expect(ap.length).toBeGreaterThan(0);
    for (const r of ap) expect([r.aperiodic_offset, r.exponent]).toEqual([r.stored, r.e2]);
    const arch = await rows(
      `SELECT t.subject, t.tst_min, r.tst_min AS stored, t.clean_n2_min, t.recording_id FROM tidy_sleep_architecture t JOIN recordings r USING (recording_id) ORDER BY t.subject`,
    );
    expect(arch.map((r) => r.subject)).toEqual(FIXTURE_PARTICIPANTS.filter((p) => p.ingested).map((p) => p.subject));
    for (const r of arch) {
      expect(r.tst_min).toBe(r.stored);
      const n = (
        await rows(`SELECT n_epochs FROM spectra WHERE recording_id = '${r.recording_id}' AND stage = 'N2' AND reference = 'recorded' AND averaging = 'mean'`)
      ).map((x) => Number(x.n_epochs));
      expect(Number(r.clean_n2_min)).toBeCloseTo(runPython<number>(`print(json.dumps(float(numpy.median(numpy.fromfile(inputs['n']) * 30 / 60))))`, { n }), 9);
    }
  });

  it('no view column needs quoting: lower case, not an SQL keyword of DuckDB (duckdb_keywords())', async () => {
    const keywords = new Set(
      (await rows(`SELECT keyword_name FROM duckdb_keywords() WHERE keyword_category <> 'unreserved'`)).map((r) => String(r.keyword_name).toLowerCase()),
    );
    expect(keywords.has('offset')).toBe(true);
    const cols = await rows(`SELECT table_name, column_name FROM duckdb_columns() WHERE table_name LIKE 'tidy_%'`);
    expect(new Set(cols.map((c) => c.table_name))).toEqual(new Set(['tidy_band_power', 'tidy_aperiodic', 'tidy_peaks', 'tidy_sleep_architecture']));
    for (const c of cols) {
      expect(String(c.column_name)).toMatch(/^[a-z][a-z0-9_]*$/);
      expect(keywords.has(String(c.column_name)), `${c.table_name}.${c.column_name}`).toBe(false);
    }
  });
});

describe('bandwise cohort-table', () => {
  it('writes a Table 1 by group: n, each participants column, total sleep time, minutes per stage, clean N2 minutes', async () => {
    const out = path.join(dir, 'table1.tsv');
    execFileSync(process.execPath, [...cli, 'cohort-table', db, '--out', out], { encoding: 'utf8' });
    const lines = readFileSync(out, 'utf8')
      .trimEnd()
      .split('\n')
      .map((l) => l.split('\t'));
    expect(lines[0]).toEqual(['characteristic', 'control', 'patient', 'all']);
    const row = (name: string) => lines.find((l) => l[0] === name)!.slice(1);
    // sub-07 has no recording in the run: not in the table
    expect(row('n')).toEqual(['4', '2', '6']);
    const ingested = FIXTURE_PARTICIPANTS.filter((p) => p.ingested);
    const meanSd = (values: number[]) =>
      runPython<string>(`x = numpy.fromfile(inputs['x'])\nprint(json.dumps(f"{x.mean():.1f} ({x.std(ddof=1):.1f})"))`, { x: values });
    const groups = ['control', 'patient'];
    expect(row('age, mean (SD)')).toEqual([
      ...groups.map((g) => meanSd(ingested.filter((p) => p.group === g).map((p) => p.age))),
      meanSd(ingested.map((p) => p.age)),
    ]);
    expect(row('sex = F, n (%)')).toEqual(['2 (50.0 %)', '1 (50.0 %)', '3 (50.0 %)']);
    const tst = await rows(`SELECT p."group" AS g, r.tst_min FROM recordings r JOIN participants p USING (subject) ORDER BY r.subject`);
    expect(row('total sleep time (min), mean (SD)')).toEqual([
      ...groups.map((g) => meanSd(tst.filter((r) => r.g === g).map((r) => Number(r.tst_min)))),
      meanSd(tst.map((r) => Number(r.tst_min))),
    ]);
    for (const name of [
      'N1 (min), mean (SD)',
      'N2 (min), mean (SD)',
      'N3 (min), mean (SD)',
      'R (min), mean (SD)',
      'W (min), mean (SD)',
      'clean N2 (min), mean (SD)',
    ])
      expect(row(name), name).toHaveLength(3);
  }, 120_000);
});
