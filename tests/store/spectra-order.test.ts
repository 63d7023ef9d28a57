/**
 * sortSpectra (ingest/store/spectra-order.ts): the spectra table rewritten in (stage, reference,
 * averaging, recording_id, channel) order. Checked against DuckDB itself: the rows in storage
 * (rowid) order equal DuckDB's ORDER BY of the same keys; the row multiset is unchanged (EXCEPT
 * ALL both ways, power lists compared as stored); the primary key is still enforced (a duplicate
 * insert fails); the file stays readable by duckdb-wasm 1.32 (header storage number ≤ 67, DuckDB
 * docs "Storage Versions and Format"); a second call finds the table sorted and does nothing.
 * Size: 6 recordings × 3 channels × 2 stages × 2 references × 2 averagings = 144 rows.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MAX_READABLE_STORAGE_NUMBER, openStore, readHeaderStorageNumber } from '../../ingest/store/database.ts';
import { sortSpectra } from '../../ingest/store/spectra-order.ts';
import type { Store } from '../../ingest/store/writer.ts';
import { makeBundle } from './make-bundle.ts';
import { count, sql, tempDir } from './helpers.ts';

const KEYS = 'stage, reference, averaging, recording_id, channel';

describe('spectra stored in stage, reference, averaging, recording, channel order', () => {
  const { dir, cleanup } = tempDir();
  const path = join(dir, 'cohort.duckdb');
  let store: Store;
  const rewrote: boolean[] = [];

  beforeAll(async () => {
    store = await openStore(path, { create: true });
    const { runId } = await store.beginRun('0.1.0', { fmaxHz: 45 });
    // recordings written one by one, as ingest does: rows grouped by recording, not by stage
    for (let seed = 1; seed <= 6; seed++) await store.writeRecording(makeBundle(runId, seed));
    await sql(store, 'CREATE TEMP TABLE before AS SELECT * FROM spectra');
    rewrote.push(await sortSpectra(store));
    rewrote.push(await sortSpectra(store));
  });
  afterAll(async () => {
    await store.close();
    cleanup();
  });

  it('was out of order before, is rewritten once, then left alone', async () => {
    expect(rewrote).toEqual([true, false]);
    expect(await count(store, 'spectra')).toBe(144);
    // the writer's order: each recording's stages interleaved (both stages among its first 8 rows)
    const firstStages = await sql(store, 'SELECT count(DISTINCT stage)::INTEGER AS n FROM (SELECT stage FROM before ORDER BY rowid LIMIT 8)');
    expect(Number(firstStages[0].n)).toBe(2);
  });

  it('storage order equals ORDER BY of the keys', async () => {
    const stored = await sql(store, `SELECT ${KEYS} FROM spectra ORDER BY rowid`);
    const sorted = await sql(store, `SELECT ${KEYS} FROM spectra ORDER BY ${KEYS}`);
    expect(stored).toEqual(sorted);
    expect(stored[0].stage).toBe('N2');
    expect(stored[143].stage).toBe('N3');
  });

  it('keeps every row and value', async () => {
    const lost = await sql(store, 'SELECT count(*)::INTEGER AS n FROM (SELECT * FROM before EXCEPT ALL SELECT * FROM spectra)');
    const added = await sql(store, 'SELECT count(*)::INTEGER AS n FROM (SELECT * FROM spectra EXCEPT ALL SELECT * FROM before)');
    expect(Number(lost[0].n)).toBe(0);
    expect(Number(added[0].n)).toBe(0);
    const cols = await sql(
      store,
      "SELECT column_name, data_type FROM duckdb_columns() WHERE table_name = 'spectra' AND database_name = current_database() ORDER BY column_index",
    );
    const colsBefore = await sql(store, "SELECT column_name, data_type FROM duckdb_columns() WHERE table_name = 'before' ORDER BY column_index");
    expect(cols).toEqual(colsBefore);
    expect(await sql(store, "SELECT table_name FROM duckdb_tables() WHERE table_name = 'spectra_sorting'")).toEqual([]);
  });

  it('keeps the primary key and a browser-readable file', async () => {
    await expect(sql(store, 'INSERT INTO spectra SELECT * FROM spectra LIMIT 1')).rejects.toThrow(/[Dd]uplicate key|PRIMARY KEY|constraint/);
    const pk = await sql(store, "SELECT constraint_type FROM duckdb_constraints() WHERE table_name = 'spectra' AND constraint_type = 'PRIMARY KEY'");
    expect(pk).toHaveLength(1);
    expect(readHeaderStorageNumber(path)).toBeLessThanOrEqual(MAX_READABLE_STORAGE_NUMBER);
    expect(await store.storageVersion()).toBe('v1.4.0+');
  });
});
