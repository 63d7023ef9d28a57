// The named queries' client (src/queries/client.ts) over duckdb-wasm: its Arrow tables and
// record batches read into plain cells, and FLOAT[] lists into Float32Arrays without a JS
// object per value (a batch whose lists lie side by side is read as a view of its buffer).
import type { RecordBatch, Table } from 'apache-arrow';
import { plainCell, type Cell, type ListBatch, type QueryResult, type SqlClient } from '../../queries/client.ts';

/** What the adapter needs from a duckdb-wasm connection. */
export interface ArrowSource {
  query(sql: string): Promise<Table>;
  /**
   * Optional: the result as a stream of record batches, each dropped once used (duckdb-wasm: a
   * streamed query on a connection of its own). Without it, list reads take the batches of query()'s table.
   */
  stream?(sql: string): AsyncIterable<RecordBatch>;
}

export function arrowClient(source: ArrowSource): SqlClient {
  return {
    query: async (sql) => tableResult(await source.query(sql)),
    listBatches: (sql, list, width, options) => listBatches(source, sql, list, width, options.stream),
  };
}

/** The cells of the named columns of a table or batch. */
function cellColumns(t: Table | RecordBatch, names: readonly string[]): Record<string, Cell[]> {
  const columns: Record<string, Cell[]> = {};
  for (const name of names) {
    const col = t.getChild(name)!;
    const cells: Cell[] = new Array(t.numRows);
    for (let i = 0; i < t.numRows; i++) cells[i] = plainCell(col.get(i), name);
    columns[name] = cells;
  }
  return columns;
}

export function tableResult(t: Table): QueryResult {
  const names = t.schema.fields.map((f) => f.name);
  return { names, rowCount: t.numRows, columns: cellColumns(t, names) };
}

async function* listBatches(source: ArrowSource, sql: string, list: string, width: number, stream: boolean): AsyncIterable<ListBatch> {
  const batches = stream && source.stream ? source.stream(sql) : (await source.query(sql)).batches;
  for await (const batch of batches) {
    if (batch.numRows === 0) continue;
    const names = batch.schema.fields.map((f) => f.name).filter((n) => n !== list);
    yield { rowCount: batch.numRows, columns: cellColumns(batch, names), values: listValues(batch, list, width) };
  }
}

/**
 * The FLOAT[] column of a batch whose lists all have `width` values, row-major: a view of the
 * batch's value buffer when its lists lie side by side with no null value, else a copy (a null
 * value inside a list → NaN). A list of another length or a null list fails.
 */
export function listValues(batch: RecordBatch, name: string, width: number): Float32Array {
  const col = batch.getChild(name);
  if (col === null) throw new Error(`result has no column ${name}`);
  const data = col.data[0];
  const offsets = data.valueOffsets as Int32Array | undefined;
  const child = data.children[0];
  if (offsets === undefined || child === undefined) throw new TypeError(`column ${name} is not a list column`);
  const values = child.values as Float32Array;
  if (!(values instanceof Float32Array)) throw new TypeError(`column ${name} is not a FLOAT[] column`);
  for (let i = 0; i < data.length; i++) {
    const n = offsets[i + 1] - offsets[i];
    if (!data.getValid(i) || n !== width) throw new RangeError(`column ${name}, row ${i}: expected ${width} values, got ${data.getValid(i) ? n : 'null'}`);
  }
  // every list is width long, so they lie side by side from offsets[0]
  const rows = values.subarray(offsets[0], offsets[0] + data.length * width);
  if (child.nullCount === 0) return rows;
  const out = Float32Array.from(rows);
  for (let j = 0; j < out.length; j++) if (!child.getValid(offsets[0] + j)) out[j] = Number.NaN;
  return out;
}
