// What the database keeps of each file's path (issue 15, finding 7). Folder names often name
// people, so by default only the file's own name is stored; `--file-names` chooses the path as
// the table gives it, relative to the table, or only the file's content hash (SHA-256, FIPS
// 180-4; the digest checked against `sha256sum` of GNU coreutils). The choice covers
// recordings.file_name and ingest_errors (file and message). A rerun that fails the same rows
// again adds no second copy of their ingest_errors rows.
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest } from '../../ingest/run.ts';
import { faultEdfBytes, STAGES_10 } from '../faults/fixture.ts';
import { run, withDb } from '../faults/helpers.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-names-'));
const at = (...f: string[]) => path.join(dir, ...f);
const LABELS = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];
const PARAMS = { references: ['recorded' as const], fit: null, minEpochs: 2 };
// invented folder names standing for the names of people
const FOLDERS = ['Nobody_Anna_1970', 'Nobody_Bert_1971', 'Nobody_Cleo_1972'];
let table = '';

/** Every text value of every table of the database, one string. */
const allText = (db: string) =>
  withDb(db, async (q) => {
    const tables = (await q('SELECT table_name FROM duckdb_tables()')).map((r) => String(r.table_name));
    const parts: string[] = [];
    for (const t of tables) parts.push(`${t}: ${JSON.stringify(await q(`SELECT * FROM "${t}"`))}`);
    return parts.join('\n');
  });

beforeAll(() => {
  mkdirSync(at('cohort'));
  for (const [i, f] of FOLDERS.slice(0, 2).entries()) {
    mkdirSync(at('cohort', f));
    writeFileSync(at('cohort', f, 'night1.edf'), faultEdfBytes({ labels: LABELS, seed: 900 + i, stages: STAGES_10 }));
  }
  mkdirSync(at('cohort', FOLDERS[2])); // holds no recording: the row fails
  mkdirSync(at('elsewhere'));
  writeFileSync(at('elsewhere', 'night2.edf'), faultEdfBytes({ labels: LABELS, seed: 910, stages: STAGES_10 }));
  const rows = [`a\t${FOLDERS[0]}/night1.edf`, `b\t${FOLDERS[1]}/night1.edf`, `c\t${FOLDERS[2]}/night1.edf`, `d\t${at('elsewhere', 'night2.edf')}`];
  table = at('cohort', 'cohort.tsv');
  writeFileSync(table, ['subject\trecording', ...rows].join('\n') + '\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('file names stored', () => {
  it('by default only the file name: no folder name anywhere in the database', async () => {
    const db = at('default.duckdb');
    const r = await run(['ingest', table, '--out', db, '--jobs', '1', '--no-fit', '--reference', 'recorded', '--min-epochs', '2']);
    expect(r.code, r.out).toBe(3); // row c fails
    expect(await withDb(db, (q) => q('SELECT subject, file_name FROM recordings ORDER BY subject'))).toEqual([
      { subject: 'a', file_name: 'night1.edf' },
      { subject: 'b', file_name: 'night1.edf' },
      { subject: 'd', file_name: 'night2.edf' },
    ]);
    const errors = await withDb(db, (q) => q('SELECT file, step, message FROM ingest_errors'));
    expect(errors).toEqual([{ file: 'night1.edf', step: 'cohort', message: "cohort table row 3, column 'recording': recording file not found: 'night1.edf'" }]);
    const lines = (await allText(db)).split('\n');
    for (const f of [...FOLDERS, 'elsewhere', dir])
      expect(
        lines.filter((l) => l.includes(f)).map((l) => l.slice(0, 40)),
        f,
      ).toEqual([]);
  }, 60_000);

  it('relative to the table, or as the table gives it', async () => {
    const rel = at('relative.duckdb');
    await runIngest(table, rel, { jobs: 1, params: PARAMS, fileNames: 'relative' });
    expect((await withDb(rel, (q) => q('SELECT file_name FROM recordings ORDER BY subject'))).map((r) => r.file_name)).toEqual([
      `${FOLDERS[0]}/night1.edf`,
      `${FOLDERS[1]}/night1.edf`,
      '../elsewhere/night2.edf',
    ]);
    expect((await withDb(rel, (q) => q('SELECT file FROM ingest_errors')))[0].file).toBe(`${FOLDERS[2]}/night1.edf`);
    const given = at('given.duckdb');
    await runIngest(table, given, { jobs: 1, params: PARAMS, fileNames: 'as-given' });
    expect((await withDb(given, (q) => q('SELECT file_name FROM recordings ORDER BY subject'))).map((r) => r.file_name)).toEqual([
      `${FOLDERS[0]}/night1.edf`,
      `${FOLDERS[1]}/night1.edf`,
      at('elsewhere', 'night2.edf'),
    ]);
  }, 60_000);

  it('only the content hash: no file or folder name at all; a rerun renames what the first run stored', async () => {
    const db = at('hash.duckdb');
    await runIngest(table, db, { jobs: 1, params: PARAMS, fileNames: 'relative' });
    const s = await runIngest(table, db, { jobs: 1, params: PARAMS, fileNames: 'hash' });
    expect(s).toMatchObject({ done: 0, skipped: 3 });
    const sha = (f: string) => execFileSync('sha256sum', [f]).toString().split(' ')[0];
    expect(await withDb(db, (q) => q('SELECT subject, file_name FROM recordings ORDER BY subject'))).toEqual([
      { subject: 'a', file_name: `${sha(at('cohort', FOLDERS[0], 'night1.edf')).slice(0, 16)}.edf` },
      { subject: 'b', file_name: `${sha(at('cohort', FOLDERS[1], 'night1.edf')).slice(0, 16)}.edf` },
      { subject: 'd', file_name: `${sha(at('elsewhere', 'night2.edf')).slice(0, 16)}.edf` },
    ]);
    expect(await withDb(db, (q) => q('SELECT DISTINCT scoring_source FROM recordings'))).toEqual([{ scoring_source: 'annotations' }]);
    // the failed row is named by its row: its errors say nothing of its path
    const fresh = at('hash-only.duckdb');
    await runIngest(table, fresh, { jobs: 1, params: PARAMS, fileNames: 'hash' });
    expect(await withDb(fresh, (q) => q('SELECT file, message FROM ingest_errors'))).toEqual([
      { file: 'row 3', message: "cohort table row 3, column 'recording': recording file not found: 'file of row 3'" },
    ]);
    const lines = (await allText(fresh)).split('\n');
    for (const f of [...FOLDERS, 'elsewhere', 'night1', 'night2', dir])
      expect(
        lines.filter((l) => l.includes(f)).map((l) => l.slice(0, 40)),
        f,
      ).toEqual([]);
  }, 60_000);
});

describe('ingest_errors on a rerun', () => {
  it('a row that fails again is not recorded twice', async () => {
    const db = at('rerun.duckdb');
    for (let k = 0; k < 3; k++) await runIngest(table, db, { jobs: 1, params: PARAMS });
    expect(await withDb(db, (q) => q('SELECT count(*)::INTEGER AS n FROM ingest_errors'))).toEqual([{ n: 1 }]);
  }, 60_000);
});
