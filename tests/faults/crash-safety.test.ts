// Crash safety (issue 8): the real `bandwise ingest` child is killed with SIGKILL at 20 seeded
// random points spread over its measured run, then rerun to completion each time. A point is a
// time stratified over the reference run, carried over to each child as progress (the peak size
// of its write-ahead log, which grows with every commit) plus the time since that progress, so the
// points land in the same phases whatever the machine's load. After every
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
import { copyFileSync, existsSync, mkdtempSync, openSync, closeSync, rmSync, statSync, writeFileSync, writeSync } from 'node:fs';
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
/** The reference run's progress over time: ms from spawn, and the largest write-ahead log size seen so far (−1: no database file yet). */
const timeline: { t: number; progress: number }[] = [];

/**
 * Polls a child's progress every 2 ms: −1 until its database file exists, then the largest size its
 * write-ahead log has reached (it grows with every committed recording and stays at its peak after
 * the final checkpoint empties the log). Progress, unlike time, does not depend on the machine's load.
 */
function progressWatch(db: string, onSample: (t: number, progress: number) => void): { stop: () => void } {
  const t0 = Date.now();
  let peak = -1;
  const timer = setInterval(() => {
    if (peak < 0 && !existsSync(db)) return onSample(Date.now() - t0, -1);
    let size = 0;
    try {
      size = statSync(`${db}.wal`).size;
    } catch {
      // no log (yet, or again after the checkpoint)
    }
    peak = Math.max(peak, size);
    onSample(Date.now() - t0, peak);
  }, 2);
  return { stop: () => clearInterval(timer) };
}

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
  const refChild = cli(['ingest', table, '--out', at('ref.duckdb'), ...ARGS]);
  const watch = progressWatch(at('ref.duckdb'), (t, progress) => timeline.push({ t, progress }));
  const ref = await refChild.ended;
  watch.stop();
  expect(ref.code, ref.out).toBe(0);
  runMs = ref.ms;
  expect(timeline.some((x) => x.progress > 0)).toBe(true);
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
    // point k: a time u_k stratified over the reference run (slice k of KILLS), turned into progress — the peak log size
    // the reference had reached at u_k, and how long after first reaching it u_k came. A cycle kills its child that long
    // after the child's own progress reaches the same peak (before the database file exists: u_k from the spawn).
    const plan = Array.from({ length: KILLS }, (_, k) => {
      const u = (runMs * (k + rng.uniform())) / KILLS;
      const here = [...timeline].reverse().find((x) => x.t <= u) ?? { t: 0, progress: -1 };
      const since = timeline.find((x) => x.progress >= here.progress)!.t;
      return { u: Math.round(u), progress: here.progress, afterMs: here.progress < 0 ? Math.round(u) : Math.round(u - since) };
    });
    const storedAtKill: number[] = new Array(KILLS).fill(-1);
    let killed = 0;
    const cycle = async (k: number) => {
      const { progress, afterMs } = plan[k];
      const db = at(`kill-${k}.duckdb`);
      const { child, ended } = cli(['ingest', table, '--out', db, ...ARGS]);
      let timer: NodeJS.Timeout | undefined;
      const kill = () => (timer ??= setTimeout(() => child.kill('SIGKILL'), afterMs));
      if (progress < 0) kill();
      const watch = progress < 0 ? null : progressWatch(db, (_, p) => p >= progress && kill());
      const first = await ended;
      clearTimeout(timer);
      watch?.stop();
      if (first.signal === 'SIGKILL') killed++;
      else expect(first.code, first.out).toBe(0); // it finished before its kill point
      // the state the kill left: each stored recording is complete (same row counts as in the uninterrupted run)
      let stored = 0;
      if (existsSync(db)) {
        const counts = await perRecordingCounts(db);
        for (const [id, c] of Object.entries(counts)) expect(c, `kill ${k} (${JSON.stringify(plan[k])}), recording ${id}`).toEqual(refCounts[id]);
        stored = Object.keys(counts).length;
      }
      storedAtKill[k] = stored;
      const rerun = await run(['ingest', table, '--out', db, ...ARGS]);
      expect(rerun.code, rerun.out).toBe(0);
      expect(rerun.out).toContain(`${N_RECORDINGS - stored} done, ${stored} already stored (skipped), 0 failed`);
      await duckdbIntegrity(db);
      expect(await dumpAll(db), `kill ${k} (${JSON.stringify(plan[k])})`).toEqual(refDump);
      rmSync(db, { force: true });
    };
    // two cycles at a time (one per core); each is timed from its own child's events
    for (let k = 0; k < KILLS; k += 2) await Promise.all([cycle(k), cycle(k + 1)]);
    const points = plan.map((p) => (p.progress < 0 ? `${p.afterMs}` : `log ${Math.round(p.progress / 1024)} KiB+${p.afterMs}`)).join(', ');
    console.log(
      `crash safety: reference run ${runMs} ms; kill points (ms from spawn, or log peak + ms): ${points}; ${killed}/${KILLS} killed; recordings stored at the kills: ${storedAtKill.join(' ')}`,
    );
    // the kills landed all over the run: before anything was stored, midway, and (some) after the last recording
    expect(killed).toBeGreaterThanOrEqual(KILLS - 3);
    expect(storedAtKill.filter((n) => n === 0).length).toBeGreaterThan(0);
    expect(storedAtKill.filter((n) => n > 0 && n < N_RECORDINGS).length).toBeGreaterThanOrEqual(2);
  }, 170_000);
});
