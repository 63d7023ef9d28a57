// The one thing the named queries need from a database: run SQL, get an Arrow table back.
// In the browser this is a duckdb-wasm AsyncDuckDBConnection; in node tests the blocking build.
import type { RecordBatch, Table } from 'apache-arrow';

export interface SqlClient {
  query(sql: string): Promise<Table>;
  /**
   * Optional: the result as a stream of record batches, each dropped once used, so neither the
   * engine nor the page holds the whole result at once (duckdb-wasm: a streamed query on a
   * connection of its own). Without it, readers take the batches of query()'s table.
   */
  stream?(sql: string): AsyncIterable<RecordBatch>;
}

/** The batches of a result: streamed where the client can, else those of the whole table. */
export async function* resultBatches(db: SqlClient, sql: string): AsyncIterable<RecordBatch> {
  if (db.stream) yield* db.stream(sql);
  else yield* (await db.query(sql)).batches;
}

/** Catalog name under which the cohort database is attached. */
export const COHORT = 'cohort';

/** Quote an SQL identifier ("a""b"). */
export function ident(name: string): string {
  return `"${name.replaceAll('"', '""')}"`;
}

/** Quote an SQL string literal ('it''s'). */
export function literal(value: string): string {
  return `'${value.replaceAll("'", "''")}'`;
}
