// The one thing the named queries need from a database: run SQL, get an Arrow table back.
// In the browser this is a duckdb-wasm AsyncDuckDBConnection; in node tests the blocking build.
import type { Table } from 'apache-arrow';

export interface SqlClient {
  query(sql: string): Promise<Table>;
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
