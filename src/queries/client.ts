// The one thing the named queries need from a database, and the helpers that read its answers.
// Two adapters implement SqlClient: src/analysis/store-client.ts (Node, @duckdb/node-api, the
// ingest store's connection) and src/dashboard/db/arrow-client.ts (the browser, duckdb-wasm).
// Both attach the cohort database as `cohort`; every named query names its tables `cohort.…`
// and casts each column it returns to VARCHAR, DOUBLE or BOOLEAN (or reads a FLOAT[] list with
// listBatches), so the two engines hand back the same plain values.

/** A plain value: what every column of a named query is cast to. */
export type Cell = string | number | boolean | null;
export type Row = Record<string, Cell>;

/** A result by column. */
export interface QueryResult {
  /** column names, in the result's order */
  names: readonly string[];
  rowCount: number;
  /** each column's cells by name, rowCount each */
  columns: Readonly<Record<string, readonly Cell[]>>;
}

/** One batch of a list read: the other columns as cells, the lists packed row-major. */
export interface ListBatch {
  rowCount: number;
  columns: Readonly<Record<string, readonly Cell[]>>;
  /** rowCount × width values, row i at [i·width, (i+1)·width); a null value inside a list is NaN */
  values: Float32Array;
}

export interface SqlClient {
  /** Run one statement; its result by column. A value that is not a plain cell fails (cast it in SQL). */
  query(sql: string): Promise<QueryResult>;
  /**
   * Run a statement with one FLOAT[] column `list`, each list `width` values long (a list of
   * another length fails; the column must hold no null list, as spectra.power is NOT NULL),
   * batch by batch in the order the engine yields them.
   * With stream, the batches come as the engine makes them and each is dropped once used, so
   * neither the engine nor the caller holds the whole result (big reads); without, one result.
   */
  listBatches(sql: string, list: string, width: number, options: { stream: boolean }): AsyncIterable<ListBatch>;
}

/** Catalog name under which the cohort database is attached. */
export const COHORT = 'cohort';

/** Quote an SQL identifier ("a""b"). */
export function ident(name: string): string {
  return `"${name.replaceAll('"', '""')}"`;
}

/** Quote an SQL string literal ('it''s'): the named queries put their values into the SQL text this way, so both engines run the same text. */
export function literal(value: string): string {
  return `'${value.replaceAll("'", "''")}'`;
}

/** A finite number as an SQL DOUBLE. */
export function doubleLiteral(value: number): string {
  if (!Number.isFinite(value)) throw new RangeError(`not a finite number: ${value}`);
  return `${value}::DOUBLE`;
}

/** A plain cell from an engine's value: bigints that fit become numbers; anything else that is not plain fails. */
export function plainCell(v: unknown, column: string): Cell {
  if (v === null || v === undefined) return null;
  if (typeof v === 'string' || typeof v === 'number' || typeof v === 'boolean') return v;
  if (typeof v === 'bigint') {
    const n = Number(v);
    if (!Number.isSafeInteger(n)) throw new RangeError(`column ${column}: integer ${v} is too large for a number`);
    return n;
  }
  throw new TypeError(`column ${column}: cannot read a value of type ${Object.prototype.toString.call(v)}; cast it in SQL`);
}

/** A column of a result or batch; fails when the result has none of that name. */
export function column(r: { columns: QueryResult['columns'] }, name: string): readonly Cell[] {
  const c = r.columns[name];
  if (c === undefined) throw new Error(`result has no column ${name}`);
  return c;
}

/** Every row of a result as a plain object, columns in the result's order. */
export function rowsOf(r: QueryResult): Row[] {
  const cols = r.names.map((n) => column(r, n));
  const rows: Row[] = new Array(r.rowCount);
  for (let i = 0; i < r.rowCount; i++) {
    const row: Row = {};
    for (let c = 0; c < cols.length; c++) row[r.names[c]] = cols[c][i];
    rows[i] = row;
  }
  return rows;
}

/** A text column (null → ''). */
export function texts(r: { columns: QueryResult['columns'] }, name: string): string[] {
  return column(r, name).map((v) => (v === null ? '' : String(v)));
}

/** A text column that may hold nulls. */
export function textsOrNull(r: { columns: QueryResult['columns'] }, name: string): (string | null)[] {
  return column(r, name).map((v) => (v === null ? null : String(v)));
}

/** A numeric column as a Float64Array (null → NaN). */
export function numbers(r: { columns: QueryResult['columns'] }, name: string): Float64Array {
  const c = column(r, name);
  const out = new Float64Array(c.length);
  for (let i = 0; i < c.length; i++) out[i] = c[i] === null ? Number.NaN : Number(c[i]);
  return out;
}

/** A numeric column that may hold nulls (null and NaN → null). */
export function numbersOrNull(r: { columns: QueryResult['columns'] }, name: string): (number | null)[] {
  return column(r, name).map((v) => (v === null || Number.isNaN(Number(v)) ? null : Number(v)));
}
