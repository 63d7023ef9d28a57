// duckdb-wasm's blocking node build (the same engine the browser runs, DuckDB 1.4.3) with a
// database file registered as a buffer and attached as `cohort`, behind the dashboard's adapter
// (src/dashboard/db/arrow-client.ts): streamed list reads on a connection of their own, as in
// the browser (src/dashboard/db/connection.ts).
import * as duckdb from '@duckdb/duckdb-wasm/blocking';
import type { RecordBatch } from 'apache-arrow';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { arrowClient } from '../../src/dashboard/db/arrow-client.ts';
import type { SqlClient } from '../../src/queries/client.ts';

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
  async function* stream(sql: string): AsyncIterable<RecordBatch> {
    const own = db.connect();
    try {
      for await (const batch of await own.send(sql, true)) yield batch;
    } finally {
      own.close();
    }
  }
  return {
    ...arrowClient({ query: async (sql: string) => conn.query(sql), stream }),
    close: () => {
      conn.close();
      db.reset();
    },
  };
}
