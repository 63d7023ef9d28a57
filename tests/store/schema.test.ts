/**
 * The database names are a public interface fixed in the design notes (docs/design.md), section
 * "The database". The expected tables and columns are parsed from that file (outside this
 * module), and checked against the tables DuckDB actually created.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/database.ts';
import { TABLE_NAMES, TABLES } from '../../ingest/store/schema.ts';
import { sql, tempDir } from './helpers.ts';

const DESIGN = join(import.meta.dirname, '..', '..', 'docs', 'design.md');

/** Tables and columns as written in docs/design.md: `name(col, col TYPE, …)`. */
function designTables(): Map<string, { name: string; type: string | null }[]> {
  const text = readFileSync(DESIGN, 'utf8');
  const section = text.slice(text.indexOf('## The database'), text.indexOf('## The command line')).replace(/\s+/g, ' ');
  const out = new Map<string, { name: string; type: string | null }[]>();
  for (const m of section.matchAll(/`([a-z_]+)\(([^`]*)\)`/g)) {
    const cols = m[2]
      .split(',')
      .map((s) => s.trim())
      .filter((s) => s !== '' && !s.includes('…'))
      .map((s) => {
        const [name, type] = s.split(' ');
        return { name, type: type ?? null };
      });
    out.set(m[1], cols);
  }
  return out;
}

describe('schema names equal docs/design.md', () => {
  const design = designTables();
  const { dir, cleanup } = tempDir();
  afterAll(cleanup);

  it('parses the twelve tables docs/design.md lists', () => {
    expect([...design.keys()].sort()).toEqual([
      'aperiodic',
      'channels',
      'epoch_band_power',
      'epoch_rejections',
      'epochs',
      'ingest_errors',
      'participants',
      'peaks',
      'quality',
      'recordings',
      'runs',
      'spectra',
    ]);
  });

  // DESIGN names the warnings table in words ("a warnings table beside it (recording, step, field, message)"),
  // and the optional per-epoch spectra ("Optional: per-epoch spectra (compact, `--epoch-spectra`)")
  it('has every DESIGN table, plus only reference_skips, warnings and epoch_spectra', () => {
    expect(new Set(TABLE_NAMES)).toEqual(new Set([...design.keys(), 'reference_skips', 'warnings', 'epoch_spectra']));
  });

  it('the created database has every DESIGN column under its exact name, with the stated types', async () => {
    const store = await openStore(join(dir, 'schema.duckdb'), { create: true });
    await store.writeParticipants(['group', 'subject', 'age'], [['control', 's1', '41']]);
    const rows = await sql(store, 'SELECT table_name, column_name, data_type FROM information_schema.columns ORDER BY table_name, ordinal_position');
    await store.close();
    const actual = new Map<string, Map<string, string>>();
    for (const r of rows) {
      const t = String(r.table_name);
      if (!actual.has(t)) actual.set(t, new Map());
      actual.get(t)!.set(String(r.column_name), String(r.data_type));
    }
    // DESIGN: peaks(… same keys …, center_hz, …) — "same keys" as aperiodic: recording_id, channel, stage, reference, averaging, estimator.
    const peakKeys = ['recording_id', 'channel', 'stage', 'reference', 'averaging', 'estimator'];
    for (const [table, cols] of design) {
      const got = actual.get(table);
      expect(got, table).toBeDefined();
      const expected = table === 'peaks' ? [...peakKeys.map((name) => ({ name, type: null })), ...cols] : cols;
      for (const c of expected) {
        expect(got!.has(c.name), `${table}.${c.name}`).toBe(true);
        if (c.type !== null) expect(got!.get(c.name), `${table}.${c.name} type`).toBe(c.type);
      }
    }
    // participants: subject first.
    expect([...actual.get('participants')!.keys()][0]).toBe('subject');
  });

  it('refuses to write into a file of an earlier version that lacks a column, naming it, and leaves the file as it was', async () => {
    const file = join(dir, 'older.duckdb');
    const store = await openStore(file, { create: true });
    await sql(store, 'ALTER TABLE epoch_rejections DROP COLUMN reference'); // as files written before the column existed
    await store.close();
    await expect(openStore(file, { create: true })).rejects.toThrow(
      /earlier version of bandwise \(missing columns: epoch_rejections\.reference\); write into a new database file/,
    );
    const again = await openStore(file, { readOnly: true });
    const cols = await sql(again, "SELECT column_name FROM duckdb_columns() WHERE table_name = 'epoch_rejections' ORDER BY column_index");
    await again.close();
    expect(cols.map((c) => c.column_name)).toEqual(['recording_id', 'channel', 'epoch', 'reason', 'value']);
  });

  it('no column could hold EDF patient or recording identification text', () => {
    for (const t of TABLES) for (const c of t.columns) expect(c.name).not.toMatch(/patient|birth|identification|local_rec|startdate/i);
  });
});
