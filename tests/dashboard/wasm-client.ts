// duckdb-wasm's blocking node build (the same engine the browser runs, DuckDB 1.4.3) with a
// database file registered as a buffer and attached as `cohort`, wrapped as a SqlClient.
import * as duckdb from '@duckdb/duckdb-wasm/blocking';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import type { SqlClient } from '../../src/dashboard/db/sql-client.ts';

const dist = path.dirname(createRequire(import.meta.url).resolve('@duckdb/duckdb-wasm/dist/duckdb-eh.wasm'));

export async function wasmClientFor(file: string): Promise<SqlClient & { close(): void }> {
  const bundles = {
    mvp: { mainModule: path.join(dist, 'duckdb-mvp.wasm'), mainWorker: '' },
    eh: { mainModule: path.join(dist, 'duckdb-eh.wasm'), mainWorker: '' },
  };
  const db = await duckdb.createDuckDB(bundles, new duckdb.VoidLogger(), duckdb.NODE_RUNTIME);
  await db.instantiate();
  db.open({ query: { castBigIntToDouble: true } });
  const conn = db.connect();
  conn.query('SET autoinstall_known_extensions = false');
  conn.query('SET autoload_known_extensions = false');
  db.registerFileBuffer('fixture.duckdb', new Uint8Array(readFileSync(file)));
  conn.query(`ATTACH 'fixture.duckdb' AS cohort (READ_ONLY)`);
  return {
    query: async (sql: string) => conn.query(sql),
    close: () => {
      conn.close();
      db.reset();
    },
  };
}
