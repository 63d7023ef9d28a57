/**
 * Columnar bulk insert through the DuckDB appender, in whole data chunks of up to 2048 rows
 * (the DuckDB vector size). Appending row by row is about 30× slower (../../shared/STACK.md).
 *
 * Each column is given as a function row → value, so the caller can read straight from its
 * typed arrays without building per-row objects. FLOAT[] lists are copied into the list's
 * child vector in one block per chunk.
 */
import duckdb from '@duckdb/node-bindings';
import { DuckDBDataChunk, type DuckDBConnection } from '@duckdb/node-api';
import { StoreError } from './errors.ts';
import type { ColumnDef, SqlType, TableDef } from './schema.ts';

export type CellValue = string | number | boolean | Date | Float32Array | Uint16Array | null;

/** One value source per column name of the table; every column must be present. */
export type ColumnSources = Record<string, (row: number) => CellValue>;

/** Append rowCount rows to table, column values read from sources. Runs inside the caller's transaction. */
export async function appendColumns(connection: DuckDBConnection, table: TableDef, rowCount: number, sources: ColumnSources): Promise<void> {
  if (rowCount === 0) return;
  for (const name of Object.keys(sources)) {
    if (!table.columns.some((c) => c.name === name)) throw new StoreError(`no such column`, { table: table.name, column: name });
  }
  const getters = table.columns.map((c) => {
    const get = sources[c.name];
    if (get) return get;
    if (c.notNull) throw new StoreError('value source missing for a NOT NULL column', { table: table.name, column: c.name });
    return () => null;
  });
  const appender = await connection.createAppender(table.name);
  try {
    const types = Array.from({ length: appender.columnCount }, (_, i) => appender.columnType(i));
    if (types.length !== table.columns.length) {
      throw new StoreError(`database has ${types.length} columns, schema.ts has ${table.columns.length}`, { table: table.name });
    }
    table.columns.forEach((def, c) => {
      if (types[c].typeId !== TYPE_ID[def.type])
        throw new StoreError(`database column is ${types[c].toString()}, schema.ts says ${def.type}`, { table: table.name, column: def.name });
    });
    const encoded = new Map<string, Uint8Array>();
    const chunkRows = duckdb.vector_size();
    for (let start = 0; start < rowCount; start += chunkRows) {
      const n = Math.min(chunkRows, rowCount - start);
      const chunk = DuckDBDataChunk.create(types, n);
      for (let c = 0; c < table.columns.length; c++) {
        const def = table.columns[c];
        if (def.type === 'FLOAT[]' || def.type === 'USMALLINT[]') fillList(chunk, c, def, table.name, start, n, getters[c]);
        else fillScalar(duckdb.data_chunk_get_vector(chunk.chunk, c), def, table.name, start, n, getters[c], encoded);
      }
      appender.appendDataChunk(chunk);
    }
    appender.flushSync();
  } catch (error) {
    // Closing an appender whose flush failed raises "transaction is aborted"; keep the first error.
    try {
      appender.closeSync();
    } catch {
      // the original error below says what went wrong
    }
    throw error;
  }
  appender.closeSync();
}

/** DuckDB type id (duckdb.h duckdb_type) of each schema type; JSON is a VARCHAR with an alias. */
const TYPE_ID: Record<SqlType, number> = {
  VARCHAR: 17,
  JSON: 17,
  INTEGER: 4,
  DOUBLE: 11,
  FLOAT: 10,
  BOOLEAN: 1,
  TIMESTAMP: 12,
  'FLOAT[]': 24,
  'USMALLINT[]': 24,
};

/**
 * One scalar column of a chunk: each value checked, then numbers, booleans and timestamps copied
 * into the vector in one block, strings assigned one by one from UTF-8 bytes encoded once per
 * distinct string (`encoded`, shared by the columns of one append), nulls cleared in the
 * validity mask (DuckDB's: bit i of little-endian 64-bit words, 1 = valid).
 */
function fillScalar(
  vector: duckdb.Vector,
  def: ColumnDef,
  table: string,
  start: number,
  n: number,
  get: (row: number) => CellValue,
  encoded: Map<string, Uint8Array>,
): void {
  if (def.type === 'FLOAT[]' || def.type === 'USMALLINT[]') throw new StoreError('list column filled as scalar', { table, column: def.name });
  const valid = new Uint8Array(Math.ceil(n / 64) * 8).fill(0xff);
  let nulls = 0;
  const block = newBlock(def.type, n); // null for strings
  for (let i = 0; i < n; i++) {
    const v = get(start + i);
    if (v === null || v === undefined) {
      if (def.notNull) throw new StoreError('null in a NOT NULL column', { table, column: def.name, row: start + i });
      valid[i >> 3] &= ~(1 << (i & 7));
      nulls++;
      continue;
    }
    if (!fits(def.type, v)) throw new StoreError(`expected ${EXPECTED[def.type]}, got ${describe(v)}`, { table, column: def.name, row: start + i });
    if (block === null) {
      let bytes = encoded.get(v as string);
      if (bytes === undefined) encoded.set(v as string, (bytes = UTF8.encode(v as string)));
      duckdb.vector_assign_string_element_len(vector, i, bytes);
    } else if (block instanceof BigInt64Array)
      block[i] = BigInt((v as Date).getTime()) * 1000n; // TIMESTAMP: µs since the epoch
    else block[i] = v === true ? 1 : v === false ? 0 : (v as number);
  }
  if (block && n > 0) duckdb.copy_data_to_vector(vector, 0, block.buffer as ArrayBuffer, 0, block.byteLength);
  if (nulls > 0) {
    duckdb.vector_ensure_validity_writable(vector);
    duckdb.copy_data_to_vector_validity(vector, 0, valid.buffer, 0, valid.byteLength);
  }
}

/** The vector's data as a typed array of its width (DuckDB: INTEGER int32, DOUBLE/FLOAT, BOOLEAN one byte, TIMESTAMP int64 µs); null for strings. */
function newBlock(type: SqlType, n: number): Int32Array | Float64Array | Float32Array | Uint8Array | BigInt64Array | null {
  switch (type) {
    case 'INTEGER':
      return new Int32Array(n);
    case 'DOUBLE':
      return new Float64Array(n);
    case 'FLOAT':
      return new Float32Array(n);
    case 'BOOLEAN':
      return new Uint8Array(n);
    case 'TIMESTAMP':
      return new BigInt64Array(n);
    default:
      return null;
  }
}

const EXPECTED: Record<SqlType, string> = {
  VARCHAR: 'a string',
  JSON: 'a string',
  INTEGER: 'a 32-bit integer',
  DOUBLE: 'a finite number (null for missing)',
  FLOAT: 'a finite number (null for missing)',
  BOOLEAN: 'a boolean',
  TIMESTAMP: 'a Date',
  'FLOAT[]': 'a Float32Array',
  'USMALLINT[]': 'a Uint16Array',
};

function fits(type: SqlType, v: CellValue): boolean {
  switch (type) {
    case 'VARCHAR':
    case 'JSON':
      return typeof v === 'string';
    case 'INTEGER':
      return typeof v === 'number' && Number.isInteger(v) && Math.abs(v) <= 2 ** 31 - 1;
    case 'DOUBLE':
    case 'FLOAT':
      return typeof v === 'number' && Number.isFinite(v);
    case 'BOOLEAN':
      return typeof v === 'boolean';
    case 'TIMESTAMP':
      return v instanceof Date && !Number.isNaN(v.getTime());
    case 'FLOAT[]':
      return v instanceof Float32Array;
    case 'USMALLINT[]':
      return v instanceof Uint16Array;
  }
}

const UTF8 = new TextEncoder();

function describe(value: unknown): string {
  if (value instanceof Float32Array) return `Float32Array(${value.length})`;
  if (value instanceof Uint16Array) return `Uint16Array(${value.length})`;
  return typeof value === 'string' ? JSON.stringify(value.slice(0, 80)) : String(value);
}

/** FLOAT[] and USMALLINT[]: list entries (offset, length) per row, then all values copied into the list's child vector at once. */
function fillList(chunk: DuckDBDataChunk, column: number, def: ColumnDef, table: string, start: number, n: number, get: (row: number) => CellValue): void {
  const floats = def.type === 'FLOAT[]';
  const lists: (Float32Array | Uint16Array)[] = new Array(n);
  const entries = new BigUint64Array(2 * n);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const value = get(start + i);
    const where = { table, column: def.name, row: start + i };
    if (!fits(def.type, value)) throw new StoreError(`expected ${EXPECTED[def.type]}, got ${describe(value)}`, where);
    const list = value as Float32Array | Uint16Array;
    if (floats) {
      for (let k = 0; k < list.length; k++) {
        if (!Number.isFinite(list[k])) throw new StoreError(`non-finite value ${list[k]} at index ${k}`, where);
      }
    }
    lists[i] = list;
    entries[2 * i] = BigInt(total);
    entries[2 * i + 1] = BigInt(list.length);
    total += list.length;
  }
  const flat = floats ? new Float32Array(total) : new Uint16Array(total);
  for (let i = 0, at = 0; i < n; i++) {
    flat.set(lists[i], at);
    at += lists[i].length;
  }
  const vector = duckdb.data_chunk_get_vector(chunk.chunk, column);
  duckdb.list_vector_reserve(vector, total);
  duckdb.list_vector_set_size(vector, total);
  const child = duckdb.list_vector_get_child(vector);
  if (total > 0) duckdb.copy_data_to_vector(child, 0, flat.buffer as ArrayBuffer, 0, flat.byteLength);
  duckdb.copy_data_to_vector(vector, 0, entries.buffer, 0, entries.byteLength);
}
