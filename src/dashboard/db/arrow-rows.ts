// Arrow tables from duckdb-wasm into plain rows and typed arrays.
import type { Table } from 'apache-arrow';

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
 * A FLOAT[] column whose lists all have `width` values, packed row-major into one
 * Float32Array of numRows × width. A list of another length or a null list fails loudly.
 */
export function listColumnToMatrix(table: Table, name: string, width: number): Float32Array {
  const col = table.getChild(name);
  if (col === null) throw new Error(`result has no column ${name}`);
  const out = new Float32Array(table.numRows * width);
  for (let i = 0; i < table.numRows; i++) {
    const list = col.get(i) as { length: number; toArray(): ArrayLike<number> } | null;
    if (list === null || list.length !== width) {
      throw new RangeError(`column ${name}, row ${i}: expected ${width} values, got ${list === null ? 'null' : list.length}`);
    }
    out.set(list.toArray(), i * width);
  }
  return out;
}
