// appendColumns writes every schema type through DuckDB data chunks (block copies for numbers,
// booleans and timestamps, one assignment per string, a validity mask for nulls). Checked by
// reading the rows back through DuckDB's own SQL (the outside reference): values, nulls at every
// position across two validity words and two chunks (2048 rows each, DuckDB's vector size),
// multi-byte UTF-8, and the errors for bad values and mismatched column types.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { appendColumns } from '../../ingest/store/chunks.ts';
import { openStore } from '../../ingest/store/database.ts';
import type { TableDef } from '../../ingest/store/schema.ts';
import type { Store } from '../../ingest/store/writer.ts';
import { sql, tempDir } from './helpers.ts';

let tmp: ReturnType<typeof tempDir>;
let store: Store;
beforeAll(async () => {
  tmp = tempDir();
  store = await openStore(join(tmp.dir, 'chunks.duckdb'), { create: true });
  await store.connection.run(
    'CREATE TABLE every_type (i INTEGER, d DOUBLE, f FLOAT, b BOOLEAN, s VARCHAR, j JSON, t TIMESTAMP, l FLOAT[], k INTEGER NOT NULL)',
  );
});
afterAll(async () => {
  await store?.close();
  tmp?.cleanup();
});

const TABLE: TableDef = {
  name: 'every_type',
  doc: '',
  columns: [
    { name: 'i', type: 'INTEGER', doc: '' },
    { name: 'd', type: 'DOUBLE', doc: '' },
    { name: 'f', type: 'FLOAT', doc: '' },
    { name: 'b', type: 'BOOLEAN', doc: '' },
    { name: 's', type: 'VARCHAR', doc: '' },
    { name: 'j', type: 'JSON', doc: '' },
    { name: 't', type: 'TIMESTAMP', doc: '' },
    { name: 'l', type: 'FLOAT[]', doc: '' },
    { name: 'k', type: 'INTEGER', doc: '', notNull: true },
  ],
};
const WORDS = ['N2', 'Fp1', 'ünïcødé µV²/Hz', '睡眠', '🛌 sleep', '', 'a string longer than twelve bytes, kept out of line'];
const N = 4100; // two full chunks of 2048 and a part of a third
const isNull = (r: number, col: number) => (r * 7 + col * 3) % 11 === 0 || r === 63 || r === 64 || r === 2047 || r === 2048;
const T0 = Date.UTC(2021, 2, 14, 22, 30, 15, 250);

describe('appendColumns: every column type into DuckDB, read back by DuckDB SQL', () => {
  it('values and nulls come back exactly', async () => {
    await appendColumns(store.connection, TABLE, N, {
      i: (r) => (isNull(r, 0) ? null : r * 1000 - 2_000_000),
      d: (r) => (isNull(r, 1) ? null : r / 7 - 100),
      f: (r) => (isNull(r, 2) ? null : r / 8),
      b: (r) => (isNull(r, 3) ? null : r % 3 === 0),
      s: (r) => (isNull(r, 4) ? null : WORDS[r % WORDS.length]),
      j: (r) => (isNull(r, 5) ? null : JSON.stringify({ r, w: WORDS[r % WORDS.length] })),
      t: (r) => (isNull(r, 6) ? null : new Date(T0 + r * 1500)),
      l: (r) => Float32Array.from({ length: r % 4 }, (_, k) => r + k / 4),
      k: (r) => r,
    });
    const rows = await sql(store, 'SELECT i, d, f, b, s, j::VARCHAR AS j, epoch_ms(t)::DOUBLE AS t, l, k FROM every_type ORDER BY k');
    expect(rows.length).toBe(N);
    for (let r = 0; r < N; r++) {
      const row = rows[r];
      expect(row.k).toBe(r);
      expect(row.i).toBe(isNull(r, 0) ? null : r * 1000 - 2_000_000);
      expect(row.d).toBe(isNull(r, 1) ? null : r / 7 - 100);
      expect(row.f).toBe(isNull(r, 2) ? null : Math.fround(r / 8));
      expect(row.b).toBe(isNull(r, 3) ? null : r % 3 === 0);
      expect(row.s).toBe(isNull(r, 4) ? null : WORDS[r % WORDS.length]);
      expect(row.j).toBe(isNull(r, 5) ? null : JSON.stringify({ r, w: WORDS[r % WORDS.length] }));
      expect(row.t).toBe(isNull(r, 6) ? null : T0 + r * 1500);
      expect(row.l).toEqual(Array.from({ length: r % 4 }, (_, k) => Math.fround(r + k / 4)));
    }
    // DuckDB's own count of nulls agrees with the pattern
    const nulls = await sql(store, 'SELECT count(*) FILTER (WHERE i IS NULL)::INTEGER AS ni, count(*) FILTER (WHERE s IS NULL)::INTEGER AS ns FROM every_type');
    const want = (col: number) => Array.from({ length: N }, (_, r) => isNull(r, col)).filter(Boolean).length;
    expect(nulls[0]).toEqual({ ni: want(0), ns: want(4) });
  });

  it('a bad value or a null in a NOT NULL column fails with table, column and row', async () => {
    const base = {
      i: () => 1,
      d: () => 1,
      f: () => 1,
      b: () => true,
      s: () => 'x',
      j: () => '{}',
      t: () => new Date(T0),
      l: () => new Float32Array(1),
      k: () => 1,
    };
    await expect(appendColumns(store.connection, TABLE, 3, { ...base, i: (r) => (r === 2 ? 1.5 : 1) })).rejects.toThrow(
      /table every_type, column i, row 2: expected a 32-bit integer, got 1\.5/,
    );
    await expect(appendColumns(store.connection, TABLE, 3, { ...base, d: (r) => (r === 1 ? Number.NaN : 1) })).rejects.toThrow(
      /column d, row 1: expected a finite number/,
    );
    await expect(appendColumns(store.connection, TABLE, 3, { ...base, s: (r) => (r === 1 ? 7 : 'x') })).rejects.toThrow(
      /column s, row 1: expected a string, got 7/,
    );
    await expect(appendColumns(store.connection, TABLE, 3, { ...base, k: (r) => (r === 2 ? null : 1) })).rejects.toThrow(
      /column k, row 2: null in a NOT NULL column/,
    );
    const mislabelled: TableDef = { ...TABLE, columns: TABLE.columns.map((c) => (c.name === 'd' ? { ...c, type: 'INTEGER' } : c)) };
    await expect(appendColumns(store.connection, mislabelled, 1, base)).rejects.toThrow(/column d: database column is DOUBLE, schema.ts says INTEGER/);
  });
});
