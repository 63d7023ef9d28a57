// Bad input to the analysis commands ends in one clear line and a documented exit status
// (issue 15, finding 6; README "Usage": 2 = the request is invalid, 1 = the data or the database
// cannot serve it), never a stack trace, and nothing is written. The real commands in child
// processes on a small invented cohort (tests/faults/analysis-cohort.ts: no N1 epoch anywhere, a
// text column `site`, a constant column `scanner`; spectra stored up to ingest's default
// --max-freq, 45 Hz, below the Nyquist frequency of the 128-Hz recordings). A DuckDB file written by something else, or
// cut short, is refused by every command, and ingest adds nothing to a foreign file.
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analysisDatabase } from './analysis-cohort.ts';
import { cli, run, withDb } from './helpers.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-bad-input-'));
const at = (f: string) => path.join(dir, f);
let db = '';
let table = '';
const QUICK = ['--permutations', '20', '--quiet'];
const sha = (f: string) => createHash('sha256').update(readFileSync(f)).digest('hex');

beforeAll(async () => {
  ({ db, table } = await analysisDatabase(dir));
  // a DuckDB file of someone else's: one table of its own, no bandwise tables
  const inst = await DuckDBInstance.create(at('foreign.duckdb'));
  const c = await inst.connect();
  await c.run('CREATE TABLE measurements (x INTEGER); INSERT INTO measurements VALUES (1), (2)');
  c.closeSync();
  inst.closeSync();
  // the database cut short (a copy interrupted, a full disk)
  writeFileSync(at('cut.duckdb'), readFileSync(db).subarray(0, 100_000));
}, 180_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Runs the command: one line on stderr starting "bandwise <command>:", no stack trace, the status, no output file. */
async function refused(args: string[], status: 1 | 2, line: RegExp): Promise<string> {
  const out = at(`out-${Math.random().toString(36).slice(2)}.json`);
  const r = await run([...args, '--out', out]);
  expect(r.code, r.out).toBe(status);
  const lines = r.out.trim().split('\n');
  expect(lines, r.out).toHaveLength(1);
  expect(lines[0]).toMatch(new RegExp(`^bandwise ${args[0]}: `));
  expect(lines[0]).toMatch(line);
  expect(r.out).not.toMatch(/\n\s+at |Error:/);
  expect(existsSync(out)).toBe(false);
  return lines[0];
}

describe('the data cannot serve the contrast (exit 1, one line)', () => {
  it('a stage with no data names the stages there are', async () => {
    await refused(['compare', db, '--groups', 'control,patient', '--stage', 'N1', ...QUICK], 1, /no N1 spectra .*; stored stages: N2, N3, R, W/);
    await refused(['band-check', db, '--groups', 'control,patient', '--stage', 'N1', '--band', '4-8', ...QUICK], 1, /no N1 spectra/);
  }, 60_000);

  it('a constant nuisance covariate is named, with its one value', async () => {
    await refused(
      ['compare', db, '--design', 'covariate', '--covariate', 'age', '--nuisance', 'scanner', '--stage', 'N2', ...QUICK],
      1,
      /nuisance covariate scanner has the same value \(1\) for all 8 subjects/,
    );
  }, 30_000);

  it('a group value that does not exist names the values that do', async () => {
    await refused(
      ['compare', db, '--groups', 'control,nobody', '--stage', 'N2', ...QUICK],
      1,
      /no subject has group 'nobody'; its values are: control, patient/,
    );
  }, 30_000);

  it('a text covariate is named as text, with the numeric columns there are', async () => {
    await refused(
      ['compare', db, '--design', 'covariate', '--covariate', 'site', '--stage', 'N2', ...QUICK],
      1,
      /covariate site holds text \(not numbers\); numeric columns: age, scanner/,
    );
  }, 30_000);

  it('too few subjects after exclusions names who was left out and why', async () => {
    writeFileSync(at('excl.tsv'), 'subject\tchannel\treason\ns1\t\tnoisy\ns3\t\tmovement\ns5\t\tnoisy\n');
    await refused(
      ['compare', db, '--groups', 'control,patient', '--stage', 'N2', '--exclusions', at('excl.tsv'), ...QUICK],
      1,
      /too few subjects: control 1, patient 4 \(each group needs at least 2\); left out: s1 \(excluded: noisy\), s3 \(excluded: movement\), s5 \(excluded: noisy\)/,
    );
  }, 30_000);

  it('fmaxHz above the stored spectra is refused, not silently cut', async () => {
    // the stored spectra end at ingest's default --max-freq, 45 Hz
    await refused(
      ['compare', db, '--groups', 'control,patient', '--stage', 'N2', '--fmax', '100', ...QUICK],
      1,
      /fmaxHz 100 Hz lies above the highest stored frequency, 45 Hz; ask for at most 45 Hz/,
    );
  }, 30_000);
});

describe('a database bandwise did not write, or one cut short', () => {
  it('compare and band-check refuse a foreign DuckDB file and a truncated one', async () => {
    await refused(
      ['compare', at('foreign.duckdb'), '--groups', 'control,patient', '--stage', 'N2', ...QUICK],
      1,
      /foreign\.duckdb was not written by bandwise \(it has no runs table; its tables: measurements\)/,
    );
    await refused(
      ['band-check', at('foreign.duckdb'), '--groups', 'control,patient', '--stage', 'N2', '--band', '4-8', ...QUICK],
      1,
      /was not written by bandwise/,
    );
    await refused(
      ['compare', at('cut.duckdb'), '--groups', 'control,patient', '--stage', 'N2', ...QUICK],
      1,
      /cut\.duckdb cannot be read as a DuckDB database \(damaged or cut short\)/,
    );
  }, 60_000);

  it('ingest refuses a foreign DuckDB file and leaves it as it was', async () => {
    const before = sha(at('foreign.duckdb'));
    const r = await run(['ingest', table, '--out', at('foreign.duckdb'), '--jobs', '1']);
    expect(r.code, r.out).toBe(1);
    expect(r.out).toMatch(/was not written by bandwise \(it has no runs table; its tables: measurements\)/);
    expect(r.out).not.toMatch(/\n\s+at /);
    expect(sha(at('foreign.duckdb'))).toBe(before);
    expect(await withDb(at('foreign.duckdb'), (q) => q('SELECT table_name FROM duckdb_tables()'))).toEqual([{ table_name: 'measurements' }]);
  }, 60_000);
});

describe('output to a reader that went away', () => {
  it('ingest … | head -1: no EPIPE stack trace, the run completes and keeps its exit status', async () => {
    // the reader closes the pipe before the command writes (as `head -1` does after its line):
    // each later write fails with EPIPE (POSIX write(2)); the command drops its output and goes on
    const db = at('pipe.duckdb');
    const { child, ended } = cli(['ingest', table, '--out', db, '--jobs', '1']);
    child.stdout!.destroy();
    const r = await ended;
    expect(r.out).not.toMatch(/EPIPE|\n\s+at /);
    expect(r.code).toBe(0);
    expect(await withDb(db, (q) => q('SELECT count(*)::INTEGER AS n FROM runs WHERE finished_at IS NOT NULL'))).toEqual([{ n: 1 }]);
  }, 120_000);
});
