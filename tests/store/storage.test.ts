/**
 * The database file must be readable by duckdb-wasm 1.32 (DuckDB 1.4.3) in the browser.
 * Checks, each against an outside source:
 *  - the file header's storage version number (DuckDB docs, "Storage Versions and Format":
 *    bytes 8–11 "DUCK", then a little-endian uint64) is at most 67, the highest duckdb-wasm
 *    1.32 reads (its own error message: "can only read versions between 64 and 67");
 *  - DuckDB's own report, duckdb_databases().tags['storage_version'], is "v1.4.0+";
 *  - the real duckdb-wasm 1.32 node build (dist/duckdb-node-blocking.cjs, offline, file
 *    registered as a buffer) ATTACHes the file and reads a spectra row bit-equal and the run's
 *    parameters JSON;
 *  - negative control: a file written with storage "latest" is refused by duckdb-wasm and by
 *    openStore.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MAX_READABLE_STORAGE_NUMBER, openStore, readHeaderStorageNumber } from '../../ingest/store/database.ts';
import type { RecordingBundle } from '../../ingest/store/bundle.ts';
import { makeBundle } from './make-bundle.ts';
import { tempDir } from './helpers.ts';

const require = createRequire(import.meta.url);

interface WasmConnection {
  query(sql: string): { toArray(): { toJSON(): Record<string, unknown> }[] };
}

/** duckdb-wasm's node blocking build, instantiated from its bundled wasm files (no network). */
async function wasmDuckDB() {
  const entry = require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-blocking.cjs');
  const duckdb = require(entry);
  const dist = dirname(entry);
  const bundles = {
    mvp: { mainModule: join(dist, 'duckdb-mvp.wasm'), mainWorker: join(dist, 'duckdb-node-mvp.worker.cjs') },
    eh: { mainModule: join(dist, 'duckdb-eh.wasm'), mainWorker: join(dist, 'duckdb-node-eh.worker.cjs') },
  };
  const db = await duckdb.createDuckDB(bundles, new duckdb.VoidLogger(), duckdb.NODE_RUNTIME);
  await db.instantiate();
  db.open({ path: ':memory:' });
  const conn: WasmConnection = db.connect();
  return { db, conn };
}

describe('storage version readable by duckdb-wasm 1.32', () => {
  const { dir, cleanup } = tempDir();
  const path = join(dir, 'cohort.duckdb');
  const latestPath = join(dir, 'latest.duckdb');
  let bundle: RecordingBundle;
  let recordingId: string;
  let tag: string;

  beforeAll(async () => {
    const store = await openStore(path, { create: true });
    const { runId } = await store.beginRun('0.1.0', { fmaxHz: 45 });
    bundle = makeBundle(runId, 5);
    recordingId = await store.writeRecording(bundle);
    await store.finishRun(runId);
    tag = await store.storageVersion();
    await store.close();
    const inst = await DuckDBInstance.create(latestPath, { storage_compatibility_version: 'latest' });
    const c = await inst.connect();
    await c.run('CREATE TABLE t (x INTEGER)');
    c.closeSync();
    inst.closeSync();
  });
  afterAll(cleanup);

  it('header storage number ≤ 67 and DuckDB reports v1.4.0+', () => {
    const number = readHeaderStorageNumber(path);
    expect(number).toBeGreaterThanOrEqual(64);
    expect(number).toBeLessThanOrEqual(MAX_READABLE_STORAGE_NUMBER);
    expect(MAX_READABLE_STORAGE_NUMBER).toBe(67);
    expect(tag).toBe('v1.4.0+');
    expect(readHeaderStorageNumber(latestPath)).toBeGreaterThan(67);
  });

  it('duckdb-wasm 1.32 reads a spectra row bit-equal and the run parameters', async () => {
    const { db, conn } = await wasmDuckDB();
    expect(conn.query('SELECT version() AS v').toArray()[0].toJSON().v).toBe('v1.4.3');
    db.registerFileBuffer('cohort.duckdb', new Uint8Array(readFileSync(path)));
    conn.query("ATTACH 'cohort.duckdb' AS cohort (READ_ONLY)");
    const want = bundle.spectra.find((s) => s.channel === 'E2' && s.stage === 'N3' && s.reference === 'average' && s.averaging === 'median')!;
    const rows = conn
      .query(
        `SELECT n_bins, power FROM cohort.spectra WHERE recording_id = '${recordingId}' AND channel = 'E2'
              AND stage = 'N3' AND reference = 'average' AND averaging = 'median'`,
      )
      .toArray()
      .map((r) => r.toJSON());
    expect(rows).toHaveLength(1);
    expect(rows[0].n_bins).toBe(181);
    const vector = rows[0].power as { toArray(): Float32Array };
    const got = Float32Array.from(vector.toArray());
    expect(Array.from(new Uint32Array(got.buffer))).toEqual(Array.from(new Uint32Array(want.power.buffer, want.power.byteOffset, 181)));
    const run = conn.query('SELECT parameters FROM cohort.runs').toArray()[0].toJSON();
    expect(JSON.parse(String(run.parameters))).toEqual({ fmaxHz: 45 });

    db.registerFileBuffer('latest.duckdb', new Uint8Array(readFileSync(latestPath)));
    expect(() => conn.query("ATTACH 'latest.duckdb' AS latest (READ_ONLY)")).toThrow(/version number 6[89]|newer version/);
  });

  it('openStore refuses a file the browser could not read', async () => {
    await expect(openStore(latestPath)).rejects.toThrow(/storage version number 6[89]/);
  });
});
