/**
 * A bundle written through the store reads back unchanged from a real DuckDB file: FLOAT[]
 * spectra and FLOAT band powers bit-equal (IEEE-754 single precision, compared as uint32
 * bit patterns), every table's row count as written, participants typed; read back through the
 * named queries of src/queries over the Node client.
 * Sizes: 42 channels × 5 stages × 5 references × 2 averagings = 2100 spectra (crosses the
 * 2048-row data-chunk boundary) and 42 × 60 × 3 = 7560 band-power rows.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/database.ts';
import { storeClient } from '../../src/analysis/store-client.ts';
import { participants } from '../../src/queries/cohort.ts';
import { aperiodicRows } from '../../src/queries/fits.ts';
import { runs } from '../../src/queries/runs.ts';
import { cohortSchema } from '../../src/queries/schema.ts';
import { spectraRows } from '../../src/queries/spectra.ts';
import type { Store } from '../../ingest/store/writer.ts';
import type { RecordingBundle } from '../../ingest/store/bundle.ts';
import { makeBundle, type BundleSize } from './make-bundle.ts';
import { count, sql, tempDir } from './helpers.ts';

const BIG: BundleSize = {
  channels: 42,
  stages: ['W', 'N1', 'N2', 'N3', 'R'],
  references: ['recorded', 'linked-mastoids', 'contralateral-mastoid', 'average', 'bipolar'],
  nBins: 181,
  epochs: 60,
  bands: ['delta', 'theta', 'sigma'],
};

const bits = (a: Float32Array): Uint32Array => new Uint32Array(a.buffer, a.byteOffset, a.length);

describe('round trip of a recording bundle', () => {
  const { dir, cleanup } = tempDir();
  const path = join(dir, 'roundtrip.duckdb');
  let store: Store;
  let runId: string;
  let bundle: RecordingBundle;
  let recordingId: string;

  beforeAll(async () => {
    store = await openStore(path, { create: true });
    ({ runId } = await store.beginRun('0.1.0', { welch: { segmentS: 4, overlap: 0.5 }, fmaxHz: 45 }));
    bundle = makeBundle(runId, 7, BIG);
    recordingId = await store.writeRecording(bundle);
    await store.writeParticipants(
      ['subject', 'group', 'age', 'score'],
      [
        ['sub-7', 'control', '41', 'n/a'],
        ['sub-8', 'patient', '39.5', ''],
        ['sub-9', 'patient', 'n/a', ''],
      ],
    );
    await store.finishRun(runId);
    await store.close();
    store = await openStore(path, { readOnly: true });
  });
  afterAll(async () => {
    await store.close();
    cleanup();
  });

  it('stores every row of every table', async () => {
    const where = 'recording_id = $1';
    expect(await count(store, 'recordings', where, [recordingId])).toBe(1);
    expect(await count(store, 'channels', where, [recordingId])).toBe(42);
    expect(await count(store, 'epochs', where, [recordingId])).toBe(60);
    expect(await count(store, 'epoch_rejections', where, [recordingId])).toBe(1);
    expect(await count(store, 'spectra', where, [recordingId])).toBe(2100);
    expect(await count(store, 'epoch_band_power', where, [recordingId])).toBe(7560);
    expect(await count(store, 'aperiodic', where, [recordingId])).toBe(1);
    expect(await count(store, 'peaks', where, [recordingId])).toBe(1);
    expect(await count(store, 'quality', where, [recordingId])).toBe(1);
    expect(await count(store, 'reference_skips', where, [recordingId])).toBe(1);
    expect(await count(store, 'warnings', where, [recordingId])).toBe(2);
  });

  it('warnings come back with their run, recording, file and step, and the channels with the unit as recorded', async () => {
    const w = await sql(store, 'SELECT run_id, recording_id, file, step, field, message, logged_at FROM warnings ORDER BY step');
    expect(w.map((r) => [r.run_id, r.recording_id, r.file, r.step, r.field, r.message])).toEqual(
      bundle.warnings!.map((x) => [runId, recordingId, 'rec-7.edf', x.step, x.field, x.message]).sort((a, b) => String(a[3]).localeCompare(String(b[3]))),
    );
    expect(w[0].logged_at).toBeInstanceOf(Date);
    expect(await store.warningCount(runId)).toBe(2);
    const ch = await sql(store, "SELECT unit, recorded_unit, physical_min FROM channels WHERE channel = 'E1'");
    expect(ch).toEqual([{ unit: 'uV', recorded_unit: 'mV', physical_min: -500 }]);
  });

  it('spectra come back bit-equal through spectraRows, for every stage × reference × averaging', async () => {
    const db = storeClient(store);
    for (const stage of BIG.stages)
      for (const reference of BIG.references)
        for (const averaging of ['mean', 'median'] as const) {
          const m = await spectraRows(db, { runId, stage, reference, averaging });
          const expected = bundle.spectra.filter((s) => s.stage === stage && s.reference === reference && s.averaging === averaging);
          expect(m.rows.length).toBe(expected.length);
          expect(m.nBins).toBe(181);
          expect(m.freqStepHz).toBe(0.25);
          for (const row of m.rows) {
            const want = expected.find((s) => s.channel === row.channel)!;
            expect(row.nEpochs).toBe(want.nEpochs);
            expect(Array.from(bits(row.power))).toEqual(Array.from(bits(want.power)));
          }
        }
  });

  it('band powers come back bit-equal with their channel, epoch and band', async () => {
    const rows = await sql(store, 'SELECT channel, epoch, band, power FROM epoch_band_power WHERE recording_id = $1', [recordingId]);
    const block = bundle.bandPowers[0];
    const key = (ch: string, e: number, b: string) => `${ch}|${e}|${b}`;
    const want = new Map<string, number>();
    for (let i = 0; i < block.power.length; i++) {
      want.set(key(block.channels[block.channelIdx[i]], block.epoch[i], block.bands[block.bandIdx[i]]), block.power[i]);
    }
    const got = new Float32Array(rows.length);
    const exp = new Float32Array(rows.length);
    rows.forEach((r, i) => {
      got[i] = Number(r.power);
      exp[i] = want.get(key(String(r.channel), Number(r.epoch), String(r.band)))!;
    });
    expect(Array.from(bits(got))).toEqual(Array.from(bits(exp)));
  });

  it('recordings, runs, aperiodic and participants read back', async () => {
    const db = storeClient(store);
    const runList = await runs(db);
    expect(runList).toHaveLength(1);
    expect(runList[0].parameters).toEqual({ fmaxHz: 45, welch: { overlap: 0.5, segmentS: 4 } });
    // DuckDB's text form of a TIMESTAMP (finishRun wrote it)
    expect(runList[0].finishedAt).toMatch(/^\d{4}-\d\d-\d\d \d\d:\d\d:\d\d/);
    const recs = await sql(store, 'SELECT recording_id, subject, file_sha256, duration_s FROM recordings WHERE run_id = $1', [runId]);
    expect(recs.map((r) => [r.recording_id, r.subject, r.file_sha256, r.duration_s])).toEqual([[recordingId, 'sub-7', bundle.recording.fileSha256, 1800]]);
    const key = { runId, stage: 'W' as const, reference: 'recorded', averaging: 'mean' };
    const ap = await aperiodicRows(db, key, 'spectral-fit');
    expect(ap.map((a) => [a.channel, a.offset, a.exponent, a.knee])).toEqual([['E1', 1.25, 1.8, 0]]);
    expect((await sql(store, 'SELECT r2 FROM aperiodic WHERE recording_id = $1', [recordingId])).map((r) => r.r2)).toEqual([0.97]);
    expect(await aperiodicRows(db, key, 'irasa')).toEqual([]);
    const p = await participants(db, await cohortSchema(db));
    expect(p.columns).toEqual([
      { name: 'subject', type: 'VARCHAR' },
      { name: 'group', type: 'VARCHAR' },
      { name: 'age', type: 'DOUBLE' },
      { name: 'score', type: 'VARCHAR' },
    ]);
    expect(p.rows).toEqual([
      { subject: 'sub-7', group: 'control', age: 41, score: null },
      { subject: 'sub-8', group: 'patient', age: 39.5, score: null },
      { subject: 'sub-9', group: 'patient', age: null, score: null },
    ]);
  });
});
