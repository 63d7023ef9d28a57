import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest } from '../../ingest/run.ts';
import { writeFixtureCohort } from './fixture.ts';

// An invented cohort of 4 recordings (8 EEG channels at 128 Hz, 36 min each) into a real DuckDB file.
const dir = mkdtempSync(path.join(tmpdir(), 'bw-ingest-'));
let table = '';
const repo = path.resolve(import.meta.dirname, '../..');
const cli = (args: string[]) =>
  spawn(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'tests/ingest/cli-entry.ts'), 'ingest', ...args], {
    stdio: ['ignore', 'pipe', 'pipe'],
  });
const exitOf = (p: ReturnType<typeof cli>) =>
  new Promise<{ code: number | null; signal: string | null; out: string }>((resolve) => {
    let out = '';
    p.stdout!.on('data', (d) => (out += d));
    p.stderr!.on('data', (d) => (out += d));
    p.on('close', (code, signal) => resolve({ code, signal, out }));
  });

/** Every table's rows, timestamps left out (they differ between runs), sorted, as JSON text. */
async function dump(db: string): Promise<Record<string, string[]>> {
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  const out: Record<string, string[]> = {};
  for (const t of [
    'runs',
    'participants',
    'recordings',
    'channels',
    'epochs',
    'epoch_rejections',
    'spectra',
    'epoch_band_power',
    'aperiodic',
    'peaks',
    'quality',
    'ingest_errors',
    'warnings',
  ]) {
    const times: Record<string, string> = { runs: 'started_at, finished_at', recordings: 'ingested_at', ingest_errors: 'logged_at', warnings: 'logged_at' };
    const r = await c.runAndReadAll(`SELECT * ${times[t] ? `EXCLUDE (${times[t]})` : ''} FROM ${t}`);
    out[t] = r
      .getRowObjectsJson()
      .map((row) => JSON.stringify(row))
      .sort();
  }
  c.closeSync();
  inst.closeSync();
  return out;
}

async function count(db: string, sql: string): Promise<number> {
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  const n = Number((await c.runAndReadAll(sql)).getRows()[0][0]);
  c.closeSync();
  inst.closeSync();
  return n;
}

beforeAll(async () => {
  ({ table } = await writeFixtureCohort(dir, 4, { nEpochs: 72 }));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('runIngest into DuckDB', () => {
  it('stores every recording, skips them on a rerun, and logs a broken file while the others go on', async () => {
    const db = path.join(dir, 'a.duckdb');
    const first = await runIngest(table, db, { jobs: 2, params: { references: ['recorded'], fit: { fitRangeHz: [1, 40], maxPeaks: 2 } } });
    expect(first).toMatchObject({ done: 4, skipped: 0, failed: [] });
    expect(await count(db, 'SELECT count(*) FROM recordings')).toBe(4);
    // 8 channels × 5 stages × 2 averagings
    expect(await count(db, 'SELECT count(*) FROM spectra')).toBe(4 * 80);
    expect(await count(db, 'SELECT count(*) FROM spectra WHERE len(power) <> n_bins OR n_bins <> 181 OR freq_step_hz <> 0.25')).toBe(0);
    expect(await count(db, 'SELECT count(*) FROM aperiodic')).toBe(4 * 80);
    expect(await count(db, "SELECT count(*) FROM epoch_rejections WHERE channel = 'C3' AND reason = 'amplitude'")).toBe(2);
    expect(await count(db, 'SELECT count(*) FROM epochs')).toBe(4 * 72);
    expect(await count(db, "SELECT count(*) FROM quality WHERE metric = 'mains-hum'")).toBe(4 * 8);
    expect(first.cohortQualityRows).toBeGreaterThan(0);
    expect(await count(db, "SELECT count(*) FROM quality WHERE metric = 'cohort-distance'")).toBe(first.cohortQualityRows);
    const again = await runIngest(table, db, { jobs: 2, params: { references: ['recorded'], fit: { fitRangeHz: [1, 40], maxPeaks: 2 } } });
    expect(again).toMatchObject({ runId: first.runId, done: 0, skipped: 4, failed: [] });
    expect(await count(db, 'SELECT count(*) FROM recordings')).toBe(4);
    // a broken EDF: header cut short. The others are kept, the failure is in ingest_errors.
    writeFileSync(path.join(dir, 's02.edf'), readFileSync(path.join(dir, 's02.edf')).subarray(0, 300));
    const other = await runIngest(table, db, { jobs: 1, params: { references: ['recorded'], fit: null } }); // fits off: other parameters
    expect(other.runId).not.toBe(first.runId); // other parameters: a new run, never mixed
    expect(other.done).toBe(3);
    expect(other.failed).toHaveLength(1);
    expect(other.failed[0]).toMatchObject({ file: 's02.edf', step: 'open' });
    expect(await count(db, `SELECT count(*) FROM ingest_errors WHERE run_id = '${other.runId}' AND file = 's02.edf' AND step = 'open'`)).toBe(1);
    expect(await count(db, `SELECT count(*) FROM recordings WHERE run_id = '${first.runId}'`)).toBe(4);
    await writeFixtureCohort(dir, 4, { nEpochs: 72 }); // restore s02
  });

  it('after SIGKILL midway, a rerun gives the same content as an uninterrupted run', async () => {
    const args = ['--jobs', '1', '--no-fit'];
    const full = path.join(dir, 'full.duckdb');
    const t0 = Date.now();
    const ref = await exitOf(cli([table, '--out', full, ...args]));
    const uninterruptedMs = Date.now() - t0;
    expect(ref.code, ref.out).toBe(0);
    expect(ref.out).toMatch(/4 done, 0 already stored \(skipped\), 0 failed/);

    const killed = path.join(dir, 'killed.duckdb');
    const child = cli([table, '--out', killed, ...args]);
    const ended = exitOf(child);
    await new Promise((r) => setTimeout(r, uninterruptedMs * 0.6));
    child.kill('SIGKILL');
    const k = await ended;
    expect(k.signal).toBe('SIGKILL');
    const partial = await count(killed, 'SELECT count(*) FROM recordings');
    expect(partial).toBeLessThan(4); // really interrupted

    const rerun = await exitOf(cli([table, '--out', killed, ...args]));
    expect(rerun.code, rerun.out).toBe(0);
    expect(rerun.out).toContain(`${4 - partial} done, ${partial} already stored`);
    expect(await dump(killed)).toEqual(await dump(full));
  });

  it('exits 1 on a cohort that cannot be read', async () => {
    const r = await exitOf(cli([path.join(dir, 'missing.tsv'), '--out', path.join(dir, 'x.duckdb')]));
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/missing\.tsv/);
  });
});
