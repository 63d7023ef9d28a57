/**
 * Columnar bulk insert through the DuckDB appender, in whole data chunks of up to 2048 rows
 * (the DuckDB vector size). Appending row by row is about 30× slower (../../shared/STACK.md).
 *
 * Each column is given as a function row → value, so the caller can read straight from its
 * typed arrays without building per-row objects. FLOAT[] lists are copied into the list's
 * child vector in one block per chunk.
 */
import duckdb from '@duckdb/node-bindings';
import { DuckDBDataChunk, timestampValue, type DuckDBConnection, type DuckDBVector } from '@duckdb/node-api';
import { StoreError } from './errors.ts';
import type { ColumnDef, TableDef } from './schema.ts';

export type CellValue = string | number | boolean | Date | Float32Array | null;

/** One value source per column name of the table; every column must be present. */
export type ColumnSources = Record<string, (row: number) => CellValue>;

/** Append rowCount rows to table, column values read from sources. Runs inside the caller's transaction. */
export async function appendColumns(
  connection: DuckDBConnection,
  table: TableDef,
  rowCount: number,
  sources: ColumnSources,
): Promise<void> {
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
    const chunkRows = duckdb.vector_size();
    for (let start = 0; start < rowCount; start += chunkRows) {
      const n = Math.min(chunkRows, rowCount - start);
      const chunk = DuckDBDataChunk.create(types, n);
      for (let c = 0; c < table.columns.length; c++) {
        const def = table.columns[c];
        if (def.type === 'FLOAT[]') fillFloatList(chunk, c, def, table.name, start, n, getters[c]);
        else fillScalar(chunk.getColumnVector(c), def, table.name, start, n, getters[c]);
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

function fillScalar(
  vector: DuckDBVector,
  def: ColumnDef,
  table: string,
  start: number,
  n: number,
  get: (row: number) => CellValue,
): void {
  for (let i = 0; i < n; i++) {
    const row = start + i;
    const value = get(row);
    if (value === null || value === undefined) {
      if (def.notNull) throw new StoreError('null in a NOT NULL column', { table, column: def.name, row });
      vector.setItem(i, null);
      continue;
    }
    vector.setItem(i, checked(value, def, table, row) as never);
  }
  vector.flush();
}

function checked(value: CellValue, def: ColumnDef, table: string, row: number): unknown {
  const where = { table, column: def.name, row };
  switch (def.type) {
    case 'VARCHAR':
    case 'JSON':
      if (typeof value !== 'string') throw new StoreError(`expected a string, got ${describe(value)}`, where);
      return value;
    case 'INTEGER':
      if (typeof value !== 'number' || !Number.isInteger(value) || Math.abs(value) > 2 ** 31 - 1) {
        throw new StoreError(`expected a 32-bit integer, got ${describe(value)}`, where);
      }
      return value;
    case 'DOUBLE':
    case 'FLOAT':
      if (typeof value !== 'number' || !Number.isFinite(value)) {
        throw new StoreError(`expected a finite number (null for missing), got ${describe(value)}`, where);
      }
      return value;
    case 'BOOLEAN':
      if (typeof value !== 'boolean') throw new StoreError(`expected a boolean, got ${describe(value)}`, where);
      return value;
    case 'TIMESTAMP':
      if (!(value instanceof Date) || Number.isNaN(value.getTime())) throw new StoreError(`expected a Date, got ${describe(value)}`, where);
      return timestampValue(BigInt(value.getTime()) * 1000n);
    case 'FLOAT[]':
      throw new StoreError('list column filled as scalar', where);
  }
}

function describe(value: unknown): string {
  if (value instanceof Float32Array) return `Float32Array(${value.length})`;
  return typeof value === 'string' ? JSON.stringify(value.slice(0, 80)) : String(value);
}

/** FLOAT[]: list entries (offset, length) per row, then all floats copied into the child vector at once. */
function fillFloatList(
  chunk: DuckDBDataChunk,
  column: number,
  def: ColumnDef,
  table: string,
  start: number,
  n: number,
  get: (row: number) => CellValue,
): void {
  const lists: Float32Array[] = new Array(n);
  const entries = new BigUint64Array(2 * n);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const value = get(start + i);
    const where = { table, column: def.name, row: start + i };
    if (!(value instanceof Float32Array)) throw new StoreError(`expected a Float32Array, got ${describe(value)}`, where);
    for (let k = 0; k < value.length; k++) {
      if (!Number.isFinite(value[k])) throw new StoreError(`non-finite value ${value[k]} at index ${k}`, where);
    }
    lists[i] = value;
    entries[2 * i] = BigInt(total);
    entries[2 * i + 1] = BigInt(value.length);
    total += value.length;
  }
  const flat = new Float32Array(total);
  for (let i = 0, at = 0; i < n; i++) {
    flat.set(lists[i], at);
    at += lists[i].length;
  }
  const vector = duckdb.data_chunk_get_vector(chunk.chunk, column);
  duckdb.list_vector_reserve(vector, total);
  duckdb.list_vector_set_size(vector, total);
  const child = duckdb.list_vector_get_child(vector);
  if (total > 0) duckdb.copy_data_to_vector(child, 0, flat.buffer, 0, flat.byteLength);
  duckdb.copy_data_to_vector(vector, 0, entries.buffer, 0, entries.byteLength);
}

