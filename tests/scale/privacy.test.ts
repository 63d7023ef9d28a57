// Health-data rule (house rules; docs/design.md "recordings … never any EDF patient or recording
// identification text"): a fake patient name, birth date, patient code and hospital planted in
// the EDF header's identification fields (EDF+ 2003 §2.1.3.3–4: "code sex birthdate name" and
// "Startdate date admincode technician equipment") must appear nowhere in what ingest writes:
// the database file bytes, any value of any table, the command's output — for a stored
// recording, for one that fails after its header was read, and after a shard merge.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeEdfFile } from '../../src/simulation/edf-writer.ts';
import { mergeShards } from '../../ingest/store/merge.ts';
import { TABLES } from '../../ingest/store/schema.ts';
import { Random } from '../../src/core/stats/random.ts';

const NAME = 'Wendelin_Harrowgate';
const BIRTH = '02-MAR-1961';
const CODE = 'MRN-QX88123';
const HOSPITAL = 'Ravensmoor_Clinic';
const TECH = 'Tech_Osgood';
// patient: code sex birthdate name; recording: Startdate dd-MMM-yyyy admincode technician equipment (invented)
const PATIENT_ID = `${CODE} F ${BIRTH} ${NAME}`;
const RECORDING_ID = `Startdate 01-JAN-2020 ${HOSPITAL} ${TECH} Amp_Q7`;
// (no digit-only pieces: random floats contain any short digit run by chance)
const SECRETS = [NAME, 'Wendelin', 'Harrowgate', BIRTH, 'MAR-1961', CODE, 'QX88123', HOSPITAL, 'Ravensmoor', TECH, 'Osgood'];

const dir = mkdtempSync(path.join(tmpdir(), 'bw-privacy-'));
const at = (f: string) => path.join(dir, f);
const repo = path.resolve(import.meta.dirname, '../..');
const cli = (args: string[]) =>
  spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'tests/scale/cli-entry.ts'), ...args], { encoding: 'utf8' });
const STAGE_TEXT = ['Sleep stage W', 'Sleep stage 1', 'Sleep stage 2', 'Sleep stage 3', 'Sleep stage R'];

async function writeNamedEdf(file: string, seed: number, nEpochs: number): Promise<void> {
  const fs = 128;
  const rng = new Random(seed);
  const labels = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];
  const data = labels.map(() => {
    const x = new Float32Array(nEpochs * 30 * fs);
    let s = 0;
    for (let i = 0; i < x.length; i++) x[i] = s = 0.95 * s + 4 * rng.normal();
    return x;
  });
  await writeEdfFile(
    file,
    {
      variant: 'EDF+C',
      startDate: '2020-01-01T22:00:00',
      recordDurationS: 1,
      patientId: PATIENT_ID,
      recordingId: RECORDING_ID,
      signals: labels.map((label) => ({ label, physicalDimension: 'uV', physicalMin: -3200, physicalMax: 3200, samplesPerRecord: fs })),
      annotations: Array.from({ length: nEpochs }, (_, e) => ({ onsetS: 30 * e, durationS: 30, text: STAGE_TEXT[Math.floor((5 * e) / nEpochs)] })),
    },
    data,
  );
}

function clean(text: string, where: string): void {
  for (const s of SECRETS) expect(text.includes(s), `${where} contains '${s}'`).toBe(false);
}

/** Every value of every table as text (DuckDB casts each column to VARCHAR), one string. */
async function allValues(db: string): Promise<string> {
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  const parts: string[] = [];
  for (const t of [...TABLES.map((x) => x.name), 'participants']) {
    const cols = (await c.runAndReadAll(`SELECT column_name FROM duckdb_columns() WHERE table_name = '${t}'`)).getRows().map((r) => String(r[0]));
    if (cols.length === 0) continue;
    const rows = (await c.runAndReadAll(`SELECT ${cols.map((n) => `"${n}"::VARCHAR`).join(', ')} FROM "${t}"`)).getRows();
    parts.push(JSON.stringify(rows));
  }
  // the catalogue too (table and column names, comments)
  parts.push(JSON.stringify((await c.runAndReadAll('SELECT * FROM duckdb_columns()')).getRows().map((r) => r.map(String))));
  c.closeSync();
  inst.closeSync();
  return parts.join('\n');
}

/** The database file and any write-ahead log beside it, as latin1 and UTF-16LE text. */
function fileBytes(db: string): string[] {
  const files = [db, `${db}.wal`].filter(existsSync);
  return files.flatMap((f) => {
    const b = readFileSync(f);
    return [b.toString('latin1'), b.toString('utf16le')];
  });
}

let ingestOut = '';
beforeAll(async () => {
  for (let s = 1; s <= 5; s++) await writeNamedEdf(at(`rec${s}.edf`), 40 + s, 20);
  // rec6: a complete header (with the secrets) but its data records cut off: fails after the header was read
  await writeNamedEdf(at('rec6.edf'), 46, 20);
  const full = readFileSync(at('rec6.edf'));
  writeFileSync(at('rec6.edf'), full.subarray(0, 256 * 6 + 1000));
  writeFileSync(
    at('cohort.tsv'),
    ['subject\tgroup\trecording', ...[1, 2, 3, 4, 5, 6].map((s) => `p${s}\t${s % 2 ? 'a' : 'b'}\trec${s}.edf`)].join('\n') + '\n',
  );
  const r = cli(['ingest', at('cohort.tsv'), '--out', at('db.duckdb'), '--jobs', '1', '--no-fit']);
  ingestOut = r.stdout + r.stderr;
  expect(r.status, ingestOut).toBe(3); // partly failed: rec6
  for (const k of [1, 2]) {
    const s = cli(['ingest', at('cohort.tsv'), '--out', at(`shard${k}.duckdb`), '--jobs', '1', '--no-fit', '--shard', `${k}/2`]);
    ingestOut += s.stdout + s.stderr;
  }
  await mergeShards([at('shard1.duckdb'), at('shard2.duckdb')], at('merged.duckdb'));
}, 240_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('EDF identification text never reaches the database', () => {
  it('the EDF files do hold the planted text (so the checks below can fail)', () => {
    const raw = readFileSync(at('rec1.edf')).toString('latin1');
    expect(raw).toContain(PATIENT_ID);
    expect(raw).toContain(RECORDING_ID);
    expect(readFileSync(at('rec6.edf')).toString('latin1')).toContain(NAME);
  });

  it('ingest stored the 5 good recordings and logged the truncated one, without any of the planted text', async () => {
    const values = await allValues(at('db.duckdb'));
    expect(values).toContain('rec6.edf'); // the failure is in ingest_errors
    expect(values).toContain('p5');
    clean(values, 'a query result of db.duckdb');
    for (const [i, text] of fileBytes(at('db.duckdb')).entries()) clean(text, `db.duckdb bytes (${i % 2 ? 'UTF-16' : 'latin1'})`);
    clean(ingestOut, 'the ingest command output');
  });

  it('the shards and their merge hold none of it either', async () => {
    for (const f of ['shard1.duckdb', 'shard2.duckdb', 'merged.duckdb']) {
      clean(await allValues(at(f)), `a query result of ${f}`);
      for (const text of fileBytes(at(f))) clean(text, `${f} bytes`);
    }
    expect(
      readdirSync(dir)
        .filter((f) => f.endsWith('.duckdb'))
        .sort(),
    ).toEqual(['db.duckdb', 'merged.duckdb', 'shard1.duckdb', 'shard2.duckdb']);
  });
});
