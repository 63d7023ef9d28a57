/**
 * Opening (and creating) the DuckDB database file.
 *
 * The file is attached with an explicit storage version of v1.4.0 so that duckdb-wasm 1.32
 * (DuckDB 1.4.3, reads storage versions 64–67) can ATTACH it in the browser; node-api 1.5.6
 * would otherwise write whatever "latest" is asked for, which duckdb-wasm refuses.
 * DuckDB docs, "Storage Versions and Format": the setting names the oldest DuckDB that can
 * read the file; `duckdb_databases().tags` reports it, and the file header holds the storage
 * version number as a little-endian uint64 after 8 checksum bytes and the magic "DUCK".
 */
import { closeSync, existsSync, openSync, readSync, statSync } from 'node:fs';
import { DuckDBInstance } from '@duckdb/node-api';
import { DatabaseBusyError, StoreError } from './errors.ts';
import { schemaSql, TABLES } from './schema.ts';
import { Store } from './writer.ts';

/** Storage compatibility pinned at creation (the oldest DuckDB that must read the file). */
export const STORAGE_COMPATIBILITY = 'v1.4.0';

/**
 * Rows per row group of the tables written (DuckDB's default is 122,880). Smaller groups let a
 * reader that filters on the stored order (spectra: stage, reference, averaging) skip more: one
 * stage of a 2,000-recording × 64-channel database read over HTTP in duckdb-wasm, 168 → 121 MB,
 * 303 → 90 range requests, 4.9 → 1.7 s (dashboard-scale.bench.ts, the same clusters).
 */
export const ROW_GROUP_ROWS = 16_384;

/** The name the file is attached under (then made the default database, so the writer's queries name no database); the named queries of src/queries read `cohort.<table>`, as in the dashboard. */
const STORE_ALIAS = 'cohort';

/** Highest header storage number duckdb-wasm 1.32 reads (its error message: "between 64 and 67"). */
export const MAX_READABLE_STORAGE_NUMBER = 67;

export interface OpenOptions {
  /** Create the file if it does not exist (default false: it must exist). */
  create?: boolean;
  /** Open read-only (for queries; the writer methods then fail). */
  readOnly?: boolean;
}

/** Open a store at path. An existing file keeps its data; the schema is created where missing. */
export async function openStore(path: string, options: OpenOptions = {}): Promise<Store> {
  const exists = existsSync(path);
  if (!exists && !options.create) throw new StoreError(`database file not found: ${path}`);
  if (exists) {
    const number = readHeaderStorageNumber(path);
    if (number > MAX_READABLE_STORAGE_NUMBER) {
      throw new StoreError(`${path} has storage version number ${number}; the browser dashboard reads at most ${MAX_READABLE_STORAGE_NUMBER} (v1.4.x)`);
    }
  }
  // An engine with no database of its own, the file ATTACHed and made the default: storage
  // version and row-group size are options of ATTACH (DuckDB docs, "ATTACH and DETACH").
  const instance = await DuckDBInstance.create(':memory:', {
    // No network at ingest: nothing is downloaded behind the user's back.
    autoinstall_known_extensions: 'false',
    autoload_known_extensions: 'false',
  });
  const connection = await instance.connect();
  const attachOptions = [`STORAGE_VERSION '${STORAGE_COMPATIBILITY}'`, `ROW_GROUP_SIZE ${ROW_GROUP_ROWS}`];
  if (options.readOnly) attachOptions.push('READ_ONLY');
  try {
    await connection.run(`ATTACH '${path.replaceAll("'", "''")}' AS ${STORE_ALIAS} (${attachOptions.join(', ')})`);
    await connection.run(`USE ${STORE_ALIAS}`);
  } catch (e) {
    connection.closeSync();
    instance.closeSync();
    // another process holds DuckDB's file lock: say what that means instead of the raw lock error
    const busy = DatabaseBusyError.from(path, options.readOnly ?? false, e);
    if (busy) throw busy;
    // DuckDB's first line, without its "IO Error:"-style prefix
    const first = (e instanceof Error ? e.message : String(e)).split('\n')[0].replace(/^[A-Za-z ]*Error: /, '');
    throw new StoreError(`${path} cannot be read as a DuckDB database (damaged or cut short): ${first}`);
  }
  if (exists) {
    // a DuckDB file of someone else's is never read as a cohort nor given bandwise's tables
    const reader = await connection.runAndReadAll('SELECT table_name FROM duckdb_tables() WHERE database_name = current_database() ORDER BY table_name');
    const tables = reader.getRowObjects().map((r) => String(r.table_name));
    if ((tables.length > 0 || options.readOnly) && !tables.includes('runs')) {
      connection.closeSync();
      instance.closeSync();
      throw new StoreError(
        tables.length > 0
          ? `${path} was not written by bandwise (it has no runs table; its tables: ${tables.join(', ')})`
          : `${path} holds no bandwise data (no tables)`,
      );
    }
  }
  if (!options.readOnly) {
    for (const sql of schemaSql()) await connection.run(sql);
    // a file from an earlier bandwise may lack columns added since (CREATE … IF NOT EXISTS keeps its tables)
    const reader = await connection.runAndReadAll(`SELECT table_name, column_name FROM duckdb_columns() WHERE database_name = current_database()`);
    const have = new Set(reader.getRowObjects().map((r) => `${r.table_name}.${r.column_name}`));
    const missing = TABLES.flatMap((t) => t.columns.map((c) => `${t.name}.${c.name}`)).filter((k) => !have.has(k));
    if (missing.length > 0) {
      connection.closeSync();
      instance.closeSync();
      throw new StoreError(`${path} was written by an earlier version of bandwise (missing columns: ${missing.join(', ')}); write into a new database file`);
    }
  }
  return new Store(instance, connection, { readOnly: options.readOnly ?? false });
}

/**
 * The storage version number in a DuckDB file header: bytes 8–11 are "DUCK", bytes 12–19 a
 * little-endian uint64 (DuckDB docs, "Storage Versions and Format", section Storage Header).
 * 64 = v0.10–v1.1, 65 = v1.2, 66 = v1.3 (docs table); 67 = v1.4 and 68 = v1.5 as written by
 * node-api 1.5.6 here.
 */
export function readHeaderStorageNumber(path: string): number {
  const header = Buffer.alloc(20);
  const fd = openSync(path, 'r');
  try {
    const n = readSync(fd, header, 0, 20, 0);
    if (n < 20 || header.subarray(8, 12).toString('latin1') !== 'DUCK') {
      throw new StoreError(`${path} is not a DuckDB database file (no DUCK magic in its header)`);
    }
  } finally {
    closeSync(fd);
  }
  return Number(header.readBigUInt64LE(12));
}

/**
 * A write-ahead log left beside the file by a writer that was stopped (SIGKILL, a power cut)
 * holds committed data the file itself does not. A reader through DuckDB replays it, but the
 * dashboard's browser reads the file alone: so the log is checkpointed into the file first (what
 * opening the file for writing does; DuckDB docs, "CHECKPOINT"). True when there was one.
 */
export async function checkpointLeftoverLog(path: string): Promise<boolean> {
  const wal = `${path}.wal`;
  if (!existsSync(wal) || statSync(wal).size === 0) return false;
  const instance = await DuckDBInstance.create(':memory:', { autoinstall_known_extensions: 'false', autoload_known_extensions: 'false' });
  const connection = await instance.connect();
  try {
    await connection.run(`ATTACH '${path.replaceAll("'", "''")}' AS ${STORE_ALIAS}`);
    await connection.run(`CHECKPOINT ${STORE_ALIAS}`);
  } catch (e) {
    throw (
      DatabaseBusyError.from(path, false, e) ??
      new StoreError(`${path} has a write-ahead log ${wal} that could not be written into it: ${(e as Error).message}`)
    );
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
  return true;
}
