// Arrow tables from duckdb-wasm into plain rows and typed arrays.
import type { RecordBatch, Table } from 'apache-arrow';

export type Cell = string | number | boolean | null;
export type Row = Record<string, Cell>;

function plainCell(v: unknown, column: string): Cell {
  if (v === null || v === undefined) return null;
  if (typeof v === 'string' || typeof v === 'number' || typeof v === 'boolean') return v;
  if (typeof v === 'bigint') {
    const n = Number(v);
    if (!Number.isSafeInteger(n)) throw new RangeError(`column ${column}: integer ${v} is too large for a number`);
    return n;
  }
  if (v instanceof Date) return v.toISOString();
  throw new TypeError(`column ${column}: cannot show a value of type ${Object.prototype.toString.call(v)}; cast it in SQL`);
}

/** Every row of `table` as a plain object of strings, numbers, booleans and nulls. */
export function tableToRows(table: Table): Row[] {
  const names = table.schema.fields.map((f) => f.name);
  const columns = names.map((n) => table.getChild(n)!);
  const rows: Row[] = new Array(table.numRows);
  for (let i = 0; i < table.numRows; i++) {
    const row: Row = {};
    for (let c = 0; c < names.length; c++) row[names[c]] = plainCell(columns[c].get(i), names[c]);
    rows[i] = row;
  }
  return rows;
}

/** A numeric column as a Float64Array (null → NaN). */
export function numberColumn(table: Table, name: string): Float64Array {
  const col = table.getChild(name);
  if (col === null) throw new Error(`result has no column ${name}`);
  const out = new Float64Array(table.numRows);
  for (let i = 0; i < out.length; i++) {
    const v = col.get(i);
    out[i] = v === null ? Number.NaN : Number(v);
  }
  return out;
}

/** A string column as an array (null → ''). */
export function stringColumn(table: Table, name: string): string[] {
  const col = table.getChild(name);
  if (col === null) throw new Error(`result has no column ${name}`);
  const out: string[] = new Array(table.numRows);
  for (let i = 0; i < out.length; i++) out[i] = String(col.get(i) ?? '');
  return out;
}

/**
 * A FLOAT[] column whose lists all have `width` values, packed row-major into one Float32Array
 * of numRows × width (no per-row list objects). A list of another length or a null list fails
 * loudly; a null value inside a list becomes NaN.
 */
export function listColumnToMatrix(table: Table, name: string, width: number): Float32Array {
  const out = new Float32Array(table.numRows * width);
  listColumnRowsInto(table, name, width, (row) => row, out);
  return out;
}

/**
 * The FLOAT[] column of a batch (or table) whose lists all have `width` values, row i copied to
 * out[target(i)·width …] (rows in any order into their places). Fails loudly on a list of another
 * length or a null list; a null value inside a list becomes NaN.
 */
export function listColumnRowsInto(batch: Table | RecordBatch, name: string, width: number, target: (row: number) => number, out: Float32Array): void {
  const col = batch.getChild(name);
  if (col === null) throw new Error(`result has no column ${name}`);
  let row = 0;
  for (const data of col.data) {
    if (data.length === 0) continue;
    const offsets = data.valueOffsets as Int32Array | undefined;
    const child = data.children[0];
    if (offsets === undefined || child === undefined) throw new TypeError(`column ${name} is not a list column`);
    const values = child.values as ArrayLike<number> & { subarray(a: number, b: number): ArrayLike<number> };
    for (let i = 0; i < data.length; i++) {
      const n = offsets[i + 1] - offsets[i];
      if (!data.getValid(i) || n !== width) {
        throw new RangeError(`column ${name}, row ${row + i}: expected ${width} values, got ${data.getValid(i) ? n : 'null'}`);
      }
      const at = target(row + i) * width;
      out.set(values.subarray(offsets[i], offsets[i + 1]), at);
      if (child.nullCount > 0) {
        for (let j = 0; j < width; j++) if (!child.getValid(offsets[i] + j)) out[at + j] = Number.NaN;
      }
    }
    row += data.length;
  }
}
