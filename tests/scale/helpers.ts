/**
 * Helpers of the scale tests: a small invented cohort (EDF+C files by src/simulation/edf-writer.ts
 * through the ingest tests' fixture writer) and a table-by-table comparison of two databases.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { TABLES } from '../../ingest/store/schema.ts';
import { writeFixtureEdf } from '../ingest/fixture.ts';

/** 5 EEG channels (3 scalp, 2 mastoids), 128 Hz, nEpochs × 30 s, one recording per subject. */
export const SMALL_LABELS = ['EEG C3', 'EEG C4', 'EEG O1', 'EEG M1', 'EEG M2'];

export async function writeSmallCohort(dir: string, subjects: number, nEpochs = 24): Promise<string> {
  mkdirSync(dir, { recursive: true });
  const rows = ['subject\tgroup\trecording\tage'];
  for (let s = 0; s < subjects; s++) {
    const subject = `sub${String(s + 1).padStart(2, '0')}`;
    await writeFixtureEdf(path.join(dir, `${subject}.edf`), { seed: 500 + s, fsHz: 128, nEpochs, labels: SMALL_LABELS, spindleUv: 6 + s });
    rows.push(`${subject}\t${s % 2 ? 'patient' : 'control'}\t${subject}.edf\t${31 + 3 * s}`);
  }
  const table = path.join(dir, 'cohort.tsv');
  writeFileSync(table, rows.join('\n') + '\n');
  return table;
}

/** Columns holding the time a row was written: differ between any two runs, left out of comparisons. */
export const TIME_COLUMNS: Record<string, string[]> = { runs: ['started_at', 'finished_at'], recordings: ['ingested_at'], ingest_errors: ['logged_at'] };

export interface TableDifference {
  table: string;
  rowsA: number;
  rowsB: number;
  /** Rows of A not in B plus rows of B not in A (multiset EXCEPT ALL, DuckDB). */
  differing: number;
}

/**
 * Every table of the schema plus participants, compared with DuckDB's EXCEPT ALL both ways.
 * FLOAT[] power is compared as its text form too (shortest round-trip digits, so two floats with
 * different bits — even 0 and −0 — give different text).
 */
export async function compareDatabases(a: string, b: string): Promise<TableDifference[]> {
  const inst = await DuckDBInstance.create(':memory:');
  const c = await inst.connect();
  await c.run(`ATTACH '${a}' AS a (READ_ONLY)`);
  await c.run(`ATTACH '${b}' AS b (READ_ONLY)`);
  const out: TableDifference[] = [];
  for (const name of [...TABLES.map((t) => t.name), 'participants']) {
    const skip = TIME_COLUMNS[name] ?? [];
    const cols = `* ${skip.length ? `EXCLUDE (${skip.join(', ')})` : ''}${name === 'spectra' ? ', power::VARCHAR AS power_text' : ''}`;
    const n = async (sql: string) => Number((await c.runAndReadAll(sql)).getRows()[0][0]);
    out.push({
      table: name,
      rowsA: await n(`SELECT count(*) FROM a.${name}`),
      rowsB: await n(`SELECT count(*) FROM b.${name}`),
      differing: await n(
        `SELECT count(*) FROM ((SELECT ${cols} FROM a.${name} EXCEPT ALL SELECT ${cols} FROM b.${name}) UNION ALL (SELECT ${cols} FROM b.${name} EXCEPT ALL SELECT ${cols} FROM a.${name}))`,
      ),
    });
  }
  c.closeSync();
  inst.closeSync();
  return out;
}

/** Every spectra.power value of a database as raw float32 bits, keyed by the spectrum's key columns. */
export async function spectraBits(db: string): Promise<Map<string, Uint32Array>> {
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  const rows = (await c.runAndReadAll('SELECT recording_id, channel, stage, reference, averaging, power FROM spectra')).getRowObjectsJS();
  const out = new Map<string, Uint32Array>();
  for (const r of rows) {
    const f = Float32Array.from(r.power as number[]);
    out.set(`${r.recording_id}|${r.channel}|${r.stage}|${r.reference}|${r.averaging}`, new Uint32Array(f.buffer));
  }
  c.closeSync();
  inst.closeSync();
  return out;
}

/** Spectra bit maps equal: same keys, same bits in every bin. Returns the first difference or null. */
export function firstBitDifference(a: Map<string, Uint32Array>, b: Map<string, Uint32Array>): string | null {
  if (a.size !== b.size) return `${a.size} vs ${b.size} spectra`;
  for (const [key, bits] of a) {
    const other = b.get(key);
    if (!other) return `${key} missing`;
    if (other.length !== bits.length) return `${key}: ${bits.length} vs ${other.length} bins`;
    for (let k = 0; k < bits.length; k++) if (bits[k] !== other[k]) return `${key} bin ${k}`;
  }
  return null;
}

export async function queryRows(db: string, sql: string): Promise<Record<string, unknown>[]> {
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  const rows = (await c.runAndReadAll(sql)).getRowObjectsJS();
  c.closeSync();
  inst.closeSync();
  return rows;
}
