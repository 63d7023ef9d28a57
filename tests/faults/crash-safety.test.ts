// Crash safety (issue 8): the real `bandwise ingest` child is killed with SIGKILL at 20 seeded
// random points spread over its measured run, then rerun to completion each time. After every
// kill, before the rerun, no recording may be half-stored; after every rerun the database must
// equal an uninterrupted run's, table by table and row by row (TIMESTAMP columns left out: run
// and commit times; run and recording ids are hashes of parameters and file contents, so they
// must match too), with no table left behind by an interrupted rewrite.
//
// DuckDB's own integrity checks (DuckDB documentation, "Storage" and the CHECKPOINT statement;
// the block layout of 4-KiB headers then 256-KiB blocks each starting with an 8-byte checksum):
// opening replays the write-ahead log, FORCE CHECKPOINT writes it into the file, and every block
// read is checked against its stored checksum ("Corrupt database file: computed checksum …").
// DuckDB has no separate integrity PRAGMA, so the check here is: open read-write (WAL replay),
// FORCE CHECKPOINT, close, then a full read of every column of every table (dumpAll) and
// PRAGMA storage_info of every table (every segment's metadata). A control flips two bytes of a
// block in a copy and expects that read to fail, so the check is shown to be live.
//
// Size: 6 recordings × 4 EEG channels × 15 min at 128 Hz, no fits, two references; one
// uninterrupted run is about 2 s here, 20 kill/rerun cycles, two at a time,
// about 45 s on 2 shared cores.
import { copyFileSync, existsSync, mkdtempSync, openSync, closeSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Random } from '../../src/core/stats/random.ts';
import { faultEdfBytes, STAGES_10 } from './fixture.ts';
import { ALL_TABLES, cli, dumpAll, perRecordingCounts, run } from './helpers.ts';

const KILLS = 20;
const SEED = 20260112;
const N_RECORDINGS = 6;
/** 15 min of scoring: the 10-epoch cycle three times. */
const STAGES = [...STAGES_10, ...STAGES_10, ...STAGES_10];
const ARGS = ['--jobs', '1', '--no-fit', '--reference', 'recorded,linked-mastoids'];
const dir = mkdtempSync(path.join(tmpdir(), 'bw-crash-'));
const at = (f: string) => path.join(dir, f);
let table = '';
let refDump: Record<string, string[]>;
let refCounts: Record<string, Record<string, number>>;
let runMs = 0;
/** When the reference run's database file appeared (the child's start-up is over), ms from spawn. */
let openMs = 0;

/** DuckDB's checks: WAL replay on open, FORCE CHECKPOINT, then storage_info of every table. */
async function duckdbIntegrity(file: string): Promise<void> {
  const inst = await DuckDBInstance.create(file);
  const c = await inst.connect();
  try {
    await c.run('FORCE CHECKPOINT');
    for (const t of ALL_TABLES) {
      const segs = Number((await c.runAndReadAll(`SELECT count(*)::INTEGER AS n FROM pragma_storage_info('${t}')`)).getRowObjectsJson()[0].n);
      const rows = Number((await c.runAndReadAll(`SELECT count(*)::INTEGER AS n FROM "${t}"`)).getRowObjectsJson()[0].n);
      if (rows > 0) expect(segs, t).toBeGreaterThan(0); // a table with rows has stored segments after the checkpoint
    }
  } finally {
    c.closeSync();
    inst.closeSync();
  }
  expect(existsSync(`${file}.wal`)).toBe(false); // checkpointed and closed: nothing left in the log
}

beforeAll(async () => {
  const rows: string[] = [];
  for (let i = 0; i < N_RECORDINGS; i++) {
    writeFileSync(at(`r${i + 1}.edf`), faultEdfBytes({ labels: ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'], seed: 70 + i, stages: STAGES }));
    rows.push(`r${i + 1}\t${i % 2 ? 'patient' : 'control'}\tr${i + 1}.edf`);
  }
  table = at('cohort.tsv');
  writeFileSync(table, ['subject\tgroup\trecording', ...rows].join('\n') + '\n');
  const t0 = Date.now();
  const refChild = cli(['ingest', table, '--out', at('ref.duckdb'), ...ARGS]);
  const poll = setInterval(() => {
    if (!openMs && existsSync(at('ref.duckdb'))) openMs = Date.now() - t0;
  }, 5);
  const ref = await refChild.ended;
  clearInterval(poll);
  expect(ref.code, ref.out).toBe(0);
  runMs = ref.ms;
  expect(openMs).toBeGreaterThan(0);
  refDump = await dumpAll(at('ref.duckdb'));
  refCounts = await perRecordingCounts(at('ref.duckdb'));
}, 60_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe(`SIGKILL at ${KILLS} random points of an ingest (seed ${SEED}), then a rerun`, () => {
  it('the uninterrupted run is complete and passes the integrity checks', async () => {
    expect(Object.keys(refCounts)).toHaveLength(N_RECORDINGS);
    for (const c of Object.values(refCounts)) expect(c).toMatchObject({ n_epochs: 30, channels: 4, epochs: 30, spectra: 60 });
    await duckdbIntegrity(at('ref.duckdb'));
    expect(await dumpAll(at('ref.duckdb'))).toEqual(refDump); // a checkpoint changes no row
  });

  it('control: a flipped byte in a data block is caught by DuckDB when the full read reaches it', async () => {
    copyFileSync(at('ref.duckdb'), at('corrupt.duckdb'));
    const fd = openSync(at('corrupt.duckdb'), 'r+');
    writeSync(fd, Buffer.from([0x5a, 0xa5]), 0, 2, 3 * 4096 + 8 + 1000); // inside the first 256-KiB block, past its checksum
    closeSync(fd);
    await expect(dumpAll(at('corrupt.duckdb'))).rejects.toThrow(/Corrupt database file: computed checksum \d+ does not match stored checksum/);
  });

  it('after every kill nothing is half-stored, and every rerun gives the uninterrupted database', async () => {
    const rng = new Random(SEED);
    // stratified: two points in the start-up (from the spawn), the others over the measured time from the database's
    // creation to the end, each in its own slice and timed from that child's own database creation (start-up varies with load)
    const plan = Array.from({ length: KILLS }, (_, k) =>
      k < 2 ? { startup: true, ms: Math.round((openMs * (k + rng.uniform())) / 2) } : { startup: false, ms: Math.round(((runMs - openMs) * (k - 2 + rng.uniform())) / (KILLS - 2)) },
    );
    const storedAtKill: number[] = new Array(KILLS).fill(-1);
    let killed = 0;
    const cycle = async (k: number) => {
      const { startup, ms } = plan[k];
      const db = at(`kill-${k}.duckdb`);
      const { child, ended } = cli(['ingest', table, '--out', db, ...ARGS]);
      let timer: NodeJS.Timeout | undefined;
      const kill = () => (timer = setTimeout(() => child.kill('SIGKILL'), ms));
      const poll = startup ? undefined : setInterval(() => existsSync(db) && (clearInterval(poll), kill()), 2);
      if (startup) kill();
      const first = await ended;
      clearTimeout(timer);
      clearInterval(poll);
      if (first.signal === 'SIGKILL') killed++;
      else expect(first.code, first.out).toBe(0); // it finished before its kill point
      // the state the kill left: each stored recording is complete (same row counts as in the uninterrupted run)
      let stored = 0;
      if (existsSync(db)) {
        const counts = await perRecordingCounts(db);
        for (const [id, c] of Object.entries(counts)) expect(c, `kill ${k} at ${ms} ms, recording ${id}`).toEqual(refCounts[id]);
        stored = Object.keys(counts).length;
      }
      storedAtKill[k] = stored;
      const rerun = await run(['ingest', table, '--out', db, ...ARGS]);
      expect(rerun.code, rerun.out).toBe(0);
      expect(rerun.out).toContain(`${N_RECORDINGS - stored} done, ${stored} already stored (skipped), 0 failed`);
      await duckdbIntegrity(db);
      expect(await dumpAll(db), `kill ${k} at ${startup ? '' : 'open+'}${ms} ms`).toEqual(refDump);
      rmSync(db, { force: true });
    };
    // two cycles at a time (one per core); each is timed from its own child's events
    for (let k = 0; k < KILLS; k += 2) await Promise.all([cycle(k), cycle(k + 1)]);
    const times = plan.map((p) => (p.startup ? `${p.ms}` : `open+${p.ms}`)).join(' ');
    console.log(`crash safety: run ${runMs} ms (database opened at ${openMs} ms); kills at ${times} ms; ${killed}/${KILLS} killed; recordings stored at the kills: ${storedAtKill.join(' ')}`);
    // the kills landed all over the run: before anything was stored, midway, and (some) after the last recording
    expect(killed).toBeGreaterThanOrEqual(KILLS - 4);
    expect(storedAtKill.filter((n) => n === 0).length).toBeGreaterThan(0);
    expect(storedAtKill.filter((n) => n > 0 && n < N_RECORDINGS).length).toBeGreaterThanOrEqual(2);
  }, 170_000);
});
