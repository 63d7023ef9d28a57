import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance, type DuckDBConnection } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readCohortTable } from '../../ingest/cohort/table.ts';
import { writeBidsCopy } from '../../src/simulation/write-bids.ts';
import { runIngest, type IngestSummary } from '../../ingest/run.ts';
import type { IngestParams } from '../../ingest/pipeline.ts';
import { writeSimulatedCohort } from '../../src/simulation/write-cohort.ts';
import { quoteIdent, TABLE_NAMES } from '../../ingest/store/schema.ts';

// Issue 3, "Done when": `bandwise ingest` on the demo cohort and on a BIDS-laid-out copy of it
// gives the same database content. The demo scenario (demo-cohort/scenario.json, invented) is cut
// to 3 controls + 3 patients of 20 min each, pat02 at 128 Hz, the rest at 256 Hz, with two
// planted artifacts moved onto these subjects so that epoch rejections and quality flags are not
// empty. Size: 6 recordings × 13 channels × 40 epochs, references recorded + linked mastoids,
// aperiodic fit on with at most 2 peaks (the default 6 triples the fit time); each layout ingested
// once with 2 workers (about 40 s in all on a loaded 2-core machine).
//
// The demo's subject codes (ctl01, …) are alphanumeric, as BIDS labels must be (BIDS
// specification; shared/STANDARDS.md), so the table's subjects are the BIDS labels as they are.
const dir = mkdtempSync(path.join(tmpdir(), 'bw-bids-eq-'));
const tableDb = path.join(dir, 'table.duckdb');
const bidsDb = path.join(dir, 'bids.duckdb');
const bidsRoot = path.join(dir, 'bids');
const params: Partial<IngestParams> = { references: ['recorded', 'linked-mastoids'], fit: { fitRangeHz: [1, 40], aperiodicForm: 'power-law', maxPeaks: 2 } };
let tableSummary: IngestSummary;
let bidsSummary: IngestSummary;
let tableText = '';
let inst: DuckDBInstance;
let c: DuckDBConnection;

// Columns dropped from the comparison, each with why it may differ between the two ingests:
const EXCLUDED: Record<string, string[]> = {
  // wall-clock times of the two runs
  runs: ['started_at', 'finished_at'],
  // ingested_at: wall-clock time of the commit; file_name: path relative to the cohort root, which
  // is the layout itself (checked below against each layout's path); scoring_source: names the
  // scoring file, ctl01_scoring.tsv vs sub-ctl01_task-sleep_events.tsv (checked below)
  recordings: ['ingested_at', 'file_name', 'scoring_source'],
  // logged_at: wall-clock time; file: path in the layout (the table is empty in both, see below)
  ingest_errors: ['logged_at', 'file'],
};

const rows = async (sql: string) => (await c.runAndReadAll(sql)).getRowObjectsJS() as Record<string, any>[];
const columnsOf = async (db: string, table: string) =>
  rows(`SELECT column_name, data_type FROM duckdb_columns() WHERE database_name = '${db}' AND table_name = '${table}' ORDER BY column_index`);

beforeAll(async () => {
  const scenario = JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../../demo-cohort/scenario.json'), 'utf8'));
  scenario.nightMin = 20;
  scenario.groups = scenario.groups.map((g: object) => ({ ...g, size: 3 }));
  scenario.subjects = { pat02: { fsHz: 128 } };
  scenario.artifacts = [
    { kind: 'movement', subject: 'ctl02', epochFraction: 0.25, rmsUv: 150, durationS: [2, 8] },
    { kind: 'mains', subject: 'pat03', frequencyHz: 50, amplitudeUv: 25, channels: 'all' },
  ];
  const files = await writeSimulatedCohort(scenario, dir);
  tableText = readFileSync(files.participantsPath, 'utf8');
  expect(tableText.split('\t')[0]).toBe('subject');
  const table = path.join(dir, 'cohort.tsv');
  writeFileSync(table, tableText);

  const copy = await writeBidsCopy(await readCohortTable(table), bidsRoot);
  expect(copy.scoringWarnings.flatMap((w) => w.warnings)).toEqual([]);
  tableSummary = await runIngest(table, tableDb, { jobs: 2, params });
  bidsSummary = await runIngest(bidsRoot, bidsDb, { jobs: 2, params });

  inst = await DuckDBInstance.create(':memory:');
  c = await inst.connect();
  await c.run(`ATTACH '${tableDb}' AS t (READ_ONLY)`);
  await c.run(`ATTACH '${bidsDb}' AS b (READ_ONLY)`);
}, 180_000);
afterAll(() => {
  c?.closeSync();
  inst?.closeSync();
  rmSync(dir, { recursive: true, force: true });
});

describe('ingest of the demo cohort as a table and as its BIDS copy', () => {
  it('ingests every recording from both layouts into the same run', () => {
    expect(tableSummary).toMatchObject({ done: 6, skipped: 0, failed: [] });
    expect(bidsSummary).toMatchObject({ done: 6, skipped: 0, failed: [] });
    // run_id is a hash of the parameters only (ingest/store/schema.ts), so equal parameters give equal runs
    expect(bidsSummary.runId).toBe(tableSummary.runId);
    expect(bidsSummary.cohortQualityRows).toBe(tableSummary.cohortQualityRows);
  });

  it('has the same tables with the same columns and types', async () => {
    const names = async (db: string) =>
      (await rows(`SELECT table_name FROM duckdb_tables() WHERE database_name = '${db}' ORDER BY table_name`)).map((r) => r.table_name);
    expect(await names('b')).toEqual(await names('t'));
    expect(await names('t')).toEqual([...TABLE_NAMES].sort());
    for (const table of TABLE_NAMES) expect(await columnsOf('b', table), table).toEqual(await columnsOf('t', table));
  });

  it('stores equal rows in every table, compared by DuckDB (EXCEPT ALL both ways)', async () => {
    for (const table of TABLE_NAMES) {
      const drop = EXCLUDED[table] ?? [];
      const cols = (await columnsOf('t', table))
        .map((r) => r.column_name as string)
        .filter((n) => !drop.includes(n))
        .map(quoteIdent)
        .join(', ');
      const q = quoteIdent(table);
      const [{ n: nt }] = await rows(`SELECT count(*)::INTEGER AS n FROM t.${q}`);
      const [{ n: nb }] = await rows(`SELECT count(*)::INTEGER AS n FROM b.${q}`);
      expect(nb, `${table} row count`).toBe(nt);
      // every table holds rows here except ingest_errors (nothing fails), reference_skips (M1 and M2 are present) and warnings (nothing partial)
      // (epoch_spectra is filled only with --epoch-spectra)
      if (!['ingest_errors', 'reference_skips', 'warnings', 'epoch_spectra'].includes(table)) expect(nt, `${table} has rows`).toBeGreaterThan(0);
      const [{ n: onlyT }] = await rows(`SELECT count(*)::INTEGER AS n FROM (SELECT ${cols} FROM t.${q} EXCEPT ALL SELECT ${cols} FROM b.${q})`);
      const [{ n: onlyB }] = await rows(`SELECT count(*)::INTEGER AS n FROM (SELECT ${cols} FROM b.${q} EXCEPT ALL SELECT ${cols} FROM t.${q})`);
      expect([onlyT, onlyB], `${table}: rows only in the table ingest, only in the BIDS ingest`).toEqual([0, 0]);
    }
  });

  it('has planted artifacts in the compared content (rejections and a mains flag)', async () => {
    const [{ n: rejected }] = await rows(
      `SELECT count(*)::INTEGER AS n FROM t.epoch_rejections e JOIN t.recordings r USING (recording_id) WHERE r.subject = 'ctl02'`,
    );
    expect(rejected).toBeGreaterThan(0);
    const flagged = await rows(
      `SELECT DISTINCT r.subject FROM t.quality q JOIN t.recordings r USING (recording_id) WHERE q.flagged AND q.metric ILIKE '%mains%'`,
    );
    expect(flagged.map((r) => r.subject)).toContain('pat03');
  });

  it('stores bit-equal spectra', async () => {
    const pairs = await rows(`SELECT x.recording_id, x.channel, x.stage, x.reference, x.averaging, x.power AS pt, y.power AS pb
      FROM t.spectra x JOIN b.spectra y USING (recording_id, channel, stage, reference, averaging)`);
    const [{ n }] = await rows('SELECT count(*)::INTEGER AS n FROM t.spectra');
    expect(pairs.length).toBe(n);
    let differing = 0;
    for (const p of pairs) {
      const bits = (x: number[]) => new Uint32Array(Float32Array.from(x).buffer);
      const a = bits(p.pt);
      const b = bits(p.pb);
      if (a.length !== b.length || a.some((v, i) => v !== b[i])) differing++;
    }
    expect(differing).toBe(0);
  });

  it('differs in file_name and scoring_source only by the layout', async () => {
    const got = await rows(`SELECT x.subject, x.file_name AS ft, y.file_name AS fb, x.scoring_source AS st, y.scoring_source AS sb
      FROM t.recordings x JOIN b.recordings y USING (recording_id) ORDER BY x.subject`);
    expect(got).toHaveLength(6);
    for (const r of got) {
      const code = r.subject;
      expect(r.ft).toBe(`${code}.edf`);
      // the file name alone, without its folders (ingest --file-names default: name)
      expect(r.fb).toBe(`sub-${r.subject}_task-sleep_eeg.edf`);
      // the scoring reader names its source by kind and file name (ingest/hypnogram/table.ts)
      expect(r.st).toBe(`table:${code}_scoring.tsv`);
      expect(r.sb).toBe(`table:sub-${r.subject}_task-sleep_events.tsv`);
    }
  });

  it('writes participants.tsv whose participant_id and columns agree with the participants table', async () => {
    // BIDS: participants.tsv, first column participant_id = 'sub-<label>', n/a for missing values
    const [bHead, ...bBody] = readFileSync(path.join(bidsRoot, 'participants.tsv'), 'utf8')
      .trimEnd()
      .split('\n')
      .map((l) => l.split('\t'));
    const [tHead, ...tBody] = tableText
      .trimEnd()
      .split('\n')
      .map((l) => l.split('\t'));
    const kept = tHead.filter((h) => h !== 'recording' && h !== 'scoring');
    expect(bHead).toEqual(['participant_id', ...kept.slice(1)]);
    expect(bBody.map((r) => [r[0].replace(/^sub-/, ''), ...r.slice(1)])).toEqual(tBody.map((r) => kept.map((h) => r[tHead.indexOf(h)])));
    expect(bBody.every((r) => r[0].startsWith('sub-'))).toBe(true);
    const db = await rows('SELECT * FROM b.participants ORDER BY subject');
    expect(db.map((r) => `sub-${r.subject}`)).toEqual(bBody.map((r) => r[0]).sort());
    expect(Object.keys(db[0])).toEqual(['subject', ...kept.slice(1)]);
  });
});
