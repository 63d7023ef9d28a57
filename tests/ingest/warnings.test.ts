// Warnings are kept: what the reader and the scoring notice (EDF+D gaps, a −1 record count, a
// truncated last record, non-ASCII header bytes, scoring that starts late and ends early, ignored
// events), converted units and what a slow channel cannot reach go to the warnings table with
// their recording, in its transaction; the recording status says what is partial; a rerun skips
// the stored recordings and keeps their warnings once; no message quotes annotation text or
// header identification.
// Fixtures from writers that are not the project's: hand-built EDF+ bytes from the field table of
// the EDF specification (tests/faults/fixture.ts: Kemp et al. 1992 §2.1–2.2, Kemp & Olivan 2003
// §2.1.3.1 EDF+D, §2.2 TALs) and Debian's libedf (tests/ingest/mixed-rates.ts).
import { readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest, type IngestSummary } from '../../ingest/run.ts';
import { makeTmpDir } from '../edf/helpers.ts';
import { faultEdfBytes } from '../faults/fixture.ts';
import { withDb } from '../faults/helpers.ts';
import { writeMixedRates } from './mixed-rates.ts';

const EEG = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];
// one record of 4 × 128 samples plus 24 annotation samples, 2 bytes each (EDF 1992 §2.2)
const RECORD_BYTES = 2 * (4 * 128 + 24);
const FAKE = ['Jane', 'Roe', 'Döe', 'Lights', 'awake'];

let tmp: ReturnType<typeof makeTmpDir>;
let db: string;
let table: string;
let first: IngestSummary;
const params = { channelTypes: ['EEG', 'EMG'], references: ['recorded' as const], minEpochs: 2 };

beforeAll(async () => {
  tmp = makeTmpDir('warnings');
  const put = (name: string, bytes: Uint8Array) => writeFileSync(path.join(tmp.dir, name), bytes);
  put('clean.edf', faultEdfBytes({ labels: EEG, seed: 1 }));
  put('gaps.edf', faultEdfBytes({ labels: EEG, seed: 2, gap: { startS: 150, lengthS: 15 } }));
  put(
    'minus-one.edf',
    faultEdfBytes({ labels: EEG, seed: 3 }, (h) => (h.nRecords = '-1')),
  );
  const whole = faultEdfBytes({ labels: EEG, seed: 4 });
  put('cut.edf', whole.subarray(0, whole.length - 100));
  // stages by annotation, but the first and last epochs carry free text instead (invented, with a fake name)
  put('late.edf', faultEdfBytes({ labels: EEG, seed: 5, stages: ['Lights off', 'W', 'N1', 'N2', 'N2', 'N3', 'N3', 'N2', 'R', 'Patient Jane Roe awake'] }));
  put('latin1.edf', faultEdfBytes({ labels: EEG, seed: 6, patient: 'X F X Jöhn_Döe' }));
  writeMixedRates(tmp.dir, 'mixed');
  const files = ['clean', 'gaps', 'minus-one', 'cut', 'late', 'latin1', 'mixed'];
  table = path.join(tmp.dir, 'cohort.tsv');
  writeFileSync(table, ['subject\trecording', ...files.map((f) => `${f}\t${f}.edf`)].join('\n') + '\n');
  db = path.join(tmp.dir, 'out.duckdb');
  first = await runIngest(table, db, { jobs: 2, params });
}, 180_000);
afterAll(() => tmp?.cleanup());

const warningsOf = (file: string) =>
  withDb(db, (q) => q(`SELECT step, field, message FROM warnings WHERE file = '${file}' ORDER BY step, field, message`)) as Promise<
    { step: string; field: string | null; message: string }[]
  >;

describe('warnings are kept', () => {
  it('stores every recording, none failed, and counts the warnings in the summary', async () => {
    expect(first.failed).toEqual([]);
    expect(first.done).toBe(7);
    const n = await withDb(db, (q) => q('SELECT count(*)::INTEGER AS n FROM warnings'));
    expect(first.warnings).toBe(n[0].n);
    expect(first.warnings).toBeGreaterThan(10);
  });

  it('gives each recording the status that says what is partial', async () => {
    const recs = await withDb(db, (q) => q('SELECT file_name, status FROM recordings ORDER BY file_name'));
    expect(Object.fromEntries(recs.map((r) => [r.file_name, r.status]))).toEqual({
      'clean.edf': 'ok',
      'cut.edf': 'partial-data', // the last data record is cut short
      'gaps.edf': 'partial-data', // 15 s missing (EDF+D)
      'late.edf': 'partial-scoring', // the first and last epochs have no stage
      'latin1.edf': 'ok-with-warnings', // complete; the header field was noted
      'minus-one.edf': 'ok-with-warnings', // complete; the record count was derived
      'mixed.edf': 'ok-with-warnings', // complete; mV scaled, slow channels limited
    });
    expect(await warningsOf('clean.edf')).toEqual([]);
  });

  it("keeps the reader's notes with their header field (EDF 1992 §2.1 number of data records; §2.2 records)", async () => {
    expect(await warningsOf('gaps.edf')).toEqual([
      { step: 'open', field: 'annotations', message: '1 gap between data records, 15 s in total; epochs that touch a gap are dropped' },
    ]);
    expect(await warningsOf('minus-one.edf')).toEqual([
      { step: 'open', field: 'number of data records', message: 'number of data records is -1 (unknown); 300 records derived from the file size' },
    ]);
    const cut = await warningsOf('cut.edf');
    expect(cut).toContainEqual({
      step: 'open',
      field: 'file',
      message: `the last data record is incomplete (${RECORD_BYTES - 100} of ${RECORD_BYTES} bytes) and is ignored`,
    });
    const latin1 = await warningsOf('latin1.edf');
    expect(latin1).toEqual([{ step: 'open', field: 'local patient identification', message: 'holds bytes outside printable ASCII (content withheld)' }]);
  });

  it('keeps the scoring notes by epoch and time, never by their text', async () => {
    // 'Lights off' at 0 s is a lights marker, not an ignored event; the last text is named by its hash
    expect(await warningsOf('late.edf')).toEqual([
      { step: 'scoring', field: 'ignored-events', message: 'text #bf0a3222 (not a stage label): 1 event(s) ignored at epoch 9 (270–300 s), first at 270 s' },
      {
        step: 'scoring',
        field: 'scoring-ends-early',
        message: 'scoring ends early: no scoring for epoch 9 (270–300 s) after the last scored epoch; set to unscored',
      },
      {
        step: 'scoring',
        field: 'scoring-starts-late',
        message: 'scoring starts late: no scoring for epoch 0 (0–30 s) before the first scored epoch; set to unscored',
      },
    ]);
  });

  it('keeps converted units and what each slow channel cannot reach', async () => {
    const mixed = await warningsOf('mixed.edf');
    expect(mixed).toContainEqual({
      step: 'channels',
      field: 'physical dimension',
      message: 'channel Leg: recorded in mV, samples and physical limits scaled ×1000 to µV',
    });
    expect(mixed).toContainEqual({
      step: 'spectra',
      field: 'bands',
      message:
        'channel Chin (20 Hz sampling, Nyquist 10 Hz): band power not computed for alpha (8–12 Hz), sigma (12–16 Hz), beta (16–30 Hz), broadband (0.5–45 Hz)',
    });
    expect(mixed.filter((w) => /channel (C3|C4|Fast)\b/.test(w.message))).toEqual([]);
    // physical limits in µV like the samples, the unit as recorded beside them
    const leg = await withDb(db, (q) =>
      q(
        "SELECT unit, recorded_unit, physical_min, physical_max FROM channels JOIN recordings USING (recording_id) WHERE file_name = 'mixed.edf' AND channel = 'Leg'",
      ),
    );
    expect(leg).toEqual([{ unit: 'µV', recorded_unit: 'mV', physical_min: -200, physical_max: 200 }]);
    const c3 = await withDb(db, (q) =>
      q("SELECT unit, recorded_unit, physical_min FROM channels JOIN recordings USING (recording_id) WHERE file_name = 'mixed.edf' AND channel = 'C3'"),
    );
    expect(c3).toEqual([{ unit: 'µV', recorded_unit: 'uV', physical_min: -400 }]);
  });

  it('belong to their recording and run, and quote no annotation text or header identification', async () => {
    const rows = await withDb(db, (q) => q('SELECT w.*, r.file_name, r.run_id AS rec_run FROM warnings w LEFT JOIN recordings r USING (recording_id)'));
    for (const r of rows) {
      expect(r.file_name, String(r.message)).toBe(r.file);
      expect(r.rec_run).toBe(r.run_id);
      for (const fake of FAKE) expect(String(r.message)).not.toContain(fake);
    }
  });

  it('a rerun skips the stored recordings and keeps their warnings once', async () => {
    const again = await runIngest(table, db, { jobs: 2, params });
    expect(again).toMatchObject({ runId: first.runId, done: 0, skipped: 7, failed: [], warnings: first.warnings });
    const n = await withDb(db, (q) => q('SELECT count(*)::INTEGER AS n FROM warnings'));
    expect(n[0].n).toBe(first.warnings);
    // the database file holds none of the invented identity (header or annotation text) in any table
    const bytes = readFileSync(db).toString('latin1');
    expect(bytes).not.toContain('Jane Roe');
  });
});
