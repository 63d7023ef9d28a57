/**
 * The named queries' client (src/queries/client.ts) over @duckdb/node-api: the ingest store's
 * connection (ingest/store/database.ts attaches the file as `cohort`). Plain queries run one at
 * a time on the store's connection; a list read runs on a connection of its own, so a query sent
 * meanwhile does not end its pending result, and copies each FLOAT[] list from DuckDB's flat
 * child vector into one Float32Array per chunk (no JS array per row).
 */
import type { DuckDBDataChunk, DuckDBListVector } from '@duckdb/node-api';
import { openStore, type Store } from '../../ingest/store/index.ts';
import { plainCell, type Cell, type ListBatch, type QueryResult, type SqlClient } from '../queries/client.ts';

export function storeClient(store: Store): SqlClient {
  return {
    query: (sql) =>
      store.exclusive(async () => {
        const reader = await store.connection.runAndReadAll(sql);
        const names = reader.columnNames();
        const values = reader.getColumnsJS();
        const columns: Record<string, Cell[]> = {};
        names.forEach((name, c) => {
          // an empty result has no column arrays; the others are converted in place (one array per column, not two)
          const cells = (values[c] ?? []) as unknown[];
          for (let i = 0; i < cells.length; i++) cells[i] = plainCell(cells[i], name);
          columns[name] = cells as Cell[];
        });
        return { names, rowCount: reader.currentRowCount, columns } satisfies QueryResult;
      }),
    listBatches: (sql, list, width, options) => listBatches(store, sql, list, width, options.stream),
  };
}

async function* listBatches(store: Store, sql: string, list: string, width: number, stream: boolean): AsyncIterable<ListBatch> {
  const connection = await store.instance.connect();
  try {
    const result = stream ? await connection.stream(sql) : await connection.run(sql);
    const names = result.columnNames();
    const at = names.indexOf(list);
    if (at < 0) throw new Error(`result has no column ${list}`);
    for (let chunk = await result.fetchChunk(); chunk && chunk.rowCount > 0; chunk = await result.fetchChunk()) {
      yield chunkBatch(chunk, names, at, width);
    }
  } finally {
    connection.closeSync();
  }
}

function chunkBatch(chunk: DuckDBDataChunk, names: readonly string[], at: number, width: number): ListBatch {
  const n = chunk.rowCount;
  const columns: Record<string, Cell[]> = {};
  for (let c = 0; c < names.length; c++) {
    if (c === at) continue;
    const vector = chunk.getColumnVector(c);
    const cells: Cell[] = new Array(n);
    for (let i = 0; i < n; i++) cells[i] = plainCell(vector.getItem(i), names[c]);
    columns[names[c]] = cells;
  }
  const lists = chunk.getColumnVector(at) as DuckDBListVector;
  const child = lists.childVector;
  const values = new Float32Array(n * width);
  for (let i = 0; i < n; i++) {
    const length = lists.getEntryLength(i);
    if (length !== width) throw new RangeError(`column ${names[at]}: expected ${width} values, got ${length}`);
    const offset = lists.getEntryOffset(i);
    const base = i * width;
    for (let k = 0; k < width; k++) values[base + k] = (child.getItem(offset + k) as number | null) ?? Number.NaN;
  }
  return { rowCount: n, columns, values };
}

/** Opens the database file read-only, hands fn its client, and closes it again. */
export async function withDatabase<T>(dbPath: string, fn: (db: SqlClient) => Promise<T>): Promise<T> {
  const store = await openStore(dbPath, { readOnly: true });
  try {
    return await fn(storeClient(store));
  } finally {
    await store.close();
  }
}
