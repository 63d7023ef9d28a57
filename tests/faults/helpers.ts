/** Child processes of the real command line and read-only looks into a database, for the fault tests. */
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { TABLES } from '../../ingest/store/schema.ts';

export const repo = path.resolve(import.meta.dirname, '../..');
const ENTRY = path.join(repo, 'tests/faults/cli-entry.ts');

export interface Ended {
  code: number | null;
  signal: NodeJS.Signals | null;
  out: string;
  ms: number;
}

/** `bandwise <args>` in a child (through tsx); `prefix` runs it under another program (setpriv, prlimit). */
export function cli(args: string[], prefix: string[] = [], env: NodeJS.ProcessEnv = process.env): { child: ChildProcess; ended: Promise<Ended> } {
  const argv = [...prefix, process.execPath, path.join(repo, 'bin/run-ts.mjs'), ENTRY, ...args];
  const t0 = Date.now();
  const child = spawn(argv[0], argv.slice(1), { stdio: ['ignore', 'pipe', 'pipe'], env });
  let out = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  const ended = new Promise<Ended>((resolve) => child.on('close', (code, signal) => resolve({ code, signal, out, ms: Date.now() - t0 })));
  return { child, ended };
}

export const run = (args: string[], prefix: string[] = [], env?: NodeJS.ProcessEnv) => cli(args, prefix, env).ended;

/** Opens a database read-only, runs fn, closes. */
export async function withDb<T>(file: string, fn: (q: (sql: string) => Promise<Record<string, unknown>[]>) => Promise<T>): Promise<T> {
  const inst = await DuckDBInstance.create(file, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  try {
    return await fn(async (sql) => (await c.runAndReadAll(sql)).getRowObjectsJson() as Record<string, unknown>[]);
  } finally {
    c.closeSync();
    inst.closeSync();
  }
}

/** Every table of the public schema plus participants. */
export const ALL_TABLES = [...TABLES.map((t) => t.name), 'participants'];

/**
 * Every row of every table as sorted JSON text, TIMESTAMP columns left out (run and commit
 * times differ between runs; run and recording ids are hashes of parameters and files, so they
 * are kept). A full read of every column: DuckDB verifies the checksum of each block it reads.
 */
export async function dumpAll(file: string): Promise<Record<string, string[]>> {
  return withDb(file, async (q) => {
    const out: Record<string, string[]> = {};
    // the list of tables itself: a table left behind by an interrupted rewrite would show here
    out['(tables)'] = (await q('SELECT table_name FROM duckdb_tables() ORDER BY table_name')).map((r) => String(r.table_name));
    for (const t of ALL_TABLES) {
      const cols = await q(`SELECT column_name, data_type FROM duckdb_columns() WHERE table_name = '${t}' ORDER BY column_index`);
      const kept = cols.filter((c) => !String(c.data_type).startsWith('TIMESTAMP')).map((c) => `"${String(c.column_name)}"`);
      if (kept.length === 0) continue;
      out[t] = (await q(`SELECT ${kept.join(', ')} FROM "${t}"`)).map((r) => JSON.stringify(r)).sort();
    }
    return out;
  });
}

/** Per recording: rows in channels, epochs, spectra, epoch_band_power, quality (to spot a half-stored recording). */
export async function perRecordingCounts(file: string): Promise<Record<string, Record<string, number>>> {
  return withDb(file, async (q) => {
    const out: Record<string, Record<string, number>> = {};
    // a process killed right after creating the file may leave it without the tables yet: nothing stored
    const tables = new Set((await q('SELECT table_name FROM duckdb_tables()')).map((r) => String(r.table_name)));
    if (!tables.has('recordings')) return out;
    for (const r of await q('SELECT recording_id, n_epochs FROM recordings')) out[String(r.recording_id)] = { n_epochs: Number(r.n_epochs) };
    for (const t of ['channels', 'epochs', 'spectra', 'epoch_band_power', 'epoch_rejections', 'reference_skips'].filter((x) => tables.has(x))) {
      for (const r of await q(`SELECT recording_id, count(*)::INTEGER AS n FROM ${t} GROUP BY recording_id`)) {
        const id = String(r.recording_id);
        // a row of a recording that is not in recordings: half-stored
        out[id] ??= { n_epochs: -1 };
        out[id][t] = Number(r.n);
      }
    }
    return out;
  });
}
