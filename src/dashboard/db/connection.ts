// duckdb-wasm in the browser: created lazily from the locally bundled wasm and worker files
// (never a CDN), extension autoload/autoinstall off, and the cohort database attached
// read-only, either over HTTP range requests or from a file the user picked.
import * as duckdb from '@duckdb/duckdb-wasm';
import type { RecordBatch } from 'apache-arrow';
import ehWorker from '@duckdb/duckdb-wasm/dist/duckdb-browser-eh.worker.js?url';
import mvpWorker from '@duckdb/duckdb-wasm/dist/duckdb-browser-mvp.worker.js?url';
import ehWasm from '@duckdb/duckdb-wasm/dist/duckdb-eh.wasm?url';
import mvpWasm from '@duckdb/duckdb-wasm/dist/duckdb-mvp.wasm?url';
import { COHORT, literal, type SqlClient } from '../../queries/client.ts';
import { arrowClient } from './arrow-client.ts';

const BUNDLES: duckdb.DuckDBBundles = {
  mvp: { mainModule: mvpWasm, mainWorker: mvpWorker },
  eh: { mainModule: ehWasm, mainWorker: ehWorker },
};

interface Engine {
  db: duckdb.AsyncDuckDB;
  conn: duckdb.AsyncDuckDBConnection;
}

let engine: Promise<Engine> | null = null;

async function createEngine(): Promise<Engine> {
  const bundle = await duckdb.selectBundle(BUNDLES);
  if (bundle.mainWorker === null) throw new Error('duckdb-wasm bundle has no worker');
  const worker = new Worker(bundle.mainWorker);
  const db = new duckdb.AsyncDuckDB(new duckdb.VoidLogger(), worker);
  await db.instantiate(bundle.mainModule, bundle.pthreadWorker);
  performance.mark('bandwise:duckdb-instantiated');
  await db.open({
    // Range reads only: never download the whole database (STACK.md).
    filesystem: { reliableHeadRequests: true, allowFullHTTPReads: false, forceFullHTTPReads: false },
    query: { castBigIntToDouble: true },
  });
  const conn = await db.connect();
  // Extensions would be fetched from the internet; the app works offline. (One round trip: every
  // statement of a cold engine costs, its code is compiled on first use.)
  await conn.query('SET autoinstall_known_extensions = false; SET autoload_known_extensions = false');
  performance.mark('bandwise:duckdb-ready');
  return { db, conn };
}

function getEngine(): Promise<Engine> {
  engine ??= createEngine().catch((err: unknown) => {
    engine = null;
    throw err;
  });
  return engine;
}

/** Start loading the engine now (errors show up on the next open). */
export function preloadEngine(): void {
  getEngine().catch(() => undefined);
}

/** An attached cohort database. */
export interface CohortConnection extends SqlClient {
  /** Where it came from: the URL or the file name. */
  source: string;
  /** The database's file name, as the header, the methods text and a command line name it. */
  name: string;
}

/** Whether a cohort database has been attached (the first open needs no DETACH). */
let attachedOnce = false;

async function attach(e: Engine, location: string, source: string, name: string): Promise<CohortConnection> {
  if (attachedOnce) await e.conn.query(`DETACH DATABASE IF EXISTS ${COHORT}`);
  attachedOnce = true;
  await e.conn.query(`ATTACH ${literal(location)} AS ${COHORT} (READ_ONLY)`);
  return { source, name, ...arrowClient({ query: (sql: string) => e.conn.query(sql), stream: (sql: string) => streamed(e, sql) }) };
}

/**
 * A streamed query on a connection of its own: a query sent on the shared connection meanwhile
 * (other views, the other loaders) would end a pending streamed result there.
 */
async function* streamed(e: Engine, sql: string): AsyncIterable<RecordBatch> {
  const conn = await e.db.connect();
  try {
    for await (const batch of await conn.send(sql, true)) yield batch;
  } finally {
    await conn.close();
  }
}

/** Attach the database served at `url` (absolute http URL), read with range requests; `name`: its file name (default: the URL's last part). */
export async function openServedDatabase(url: string, name?: string): Promise<CohortConnection> {
  const abs = new URL(url, document.baseURI).href;
  return attach(await getEngine(), abs, abs, name ?? new URL(abs).pathname.split('/').pop()!);
}

/** Attach a database file the user picked or dropped; nothing is uploaded anywhere. */
export async function openPickedFile(file: File): Promise<CohortConnection> {
  const e = await getEngine();
  const name = `picked-${Date.now()}-${file.name.replace(/[^A-Za-z0-9._-]/g, '_')}`;
  await e.db.registerFileHandle(name, file, duckdb.DuckDBDataProtocol.BROWSER_FILEREADER, true);
  return attach(e, name, file.name, file.name);
}
