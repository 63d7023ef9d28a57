/**
 * One transaction per recording: when writeRecording fails midway — after the recording,
 * channels, epochs and spectra rows were already appended — nothing of that recording is
 * stored, earlier recordings are untouched, and a corrected retry succeeds.
 * Two failure sources: a value the store's own check refuses in a later table (band index out
 * of range, raised while filling epoch_band_power), and an error raised by DuckDB itself
 * (a duplicate spectra primary key).
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/database.ts';
import { StoreError } from '../../ingest/store/errors.ts';
import { recordingIdFor } from '../../ingest/store/identity.ts';
import { TABLE_NAMES } from '../../ingest/store/schema.ts';
import type { Store } from '../../ingest/store/writer.ts';
import { makeBundle } from './make-bundle.ts';
import { count, tempDir } from './helpers.ts';

const PER_RECORDING = TABLE_NAMES.filter((t) => t !== 'runs' && t !== 'participants' && t !== 'ingest_errors');

async function rowsOf(store: Store, recordingId: string): Promise<Record<string, number>> {
  const out: Record<string, number> = {};
  for (const t of PER_RECORDING) out[t] = await count(store, t, 'recording_id = $1', [recordingId]);
  return out;
}

describe('one transaction per recording', () => {
  const { dir, cleanup } = tempDir();
  let store: Store;
  let runId: string;

  beforeAll(async () => {
    store = await openStore(join(dir, 'tx.duckdb'), { create: true });
    ({ runId } = await store.beginRun('0.1.0', { seed: 1 }));
    await store.writeRecording(makeBundle(runId, 1));
  });
  afterAll(async () => {
    await store.close();
    cleanup();
  });

  it('a bad value in a later table (band index) leaves nothing of the recording', async () => {
    const bad = makeBundle(runId, 2);
    const block = bad.bandPowers[0];
    block.bandIdx[block.bandIdx.length - 1] = 99;
    await expect(store.writeRecording(bad)).rejects.toThrow(/band index 99 outside 0\.\.2/);
    await expect(store.writeRecording(bad)).rejects.toBeInstanceOf(StoreError);
    const id = recordingIdFor(runId, bad.recording.fileSha256);
    const left = await rowsOf(store, id);
    expect(
      Object.values(left).every((n) => n === 0),
      JSON.stringify(left),
    ).toBe(true);
    expect(await store.hasRecording(runId, bad.recording.fileSha256)).toBe(false);

    block.bandIdx[block.bandIdx.length - 1] = 0;
    await store.writeRecording(bad);
    expect(await store.hasRecording(runId, bad.recording.fileSha256)).toBe(true);
    expect((await rowsOf(store, id)).epoch_band_power).toBe(3 * 40 * 3);
  });

  it('an error raised by DuckDB (duplicate spectra key) rolls back the whole recording', async () => {
    const bad = makeBundle(runId, 3);
    bad.spectra.push({ ...bad.spectra[0] });
    await expect(store.writeRecording(bad)).rejects.toThrow(/(PRIMARY KEY|Duplicate key|constraint)/i);
    const id = recordingIdFor(runId, bad.recording.fileSha256);
    const left = await rowsOf(store, id);
    expect(
      Object.values(left).every((n) => n === 0),
      JSON.stringify(left),
    ).toBe(true);
  });

  it('a NaN in the last-but-one table is refused, naming table, column and row', async () => {
    const bad = makeBundle(runId, 4);
    bad.quality[0].value = Number.NaN;
    await expect(store.writeRecording(bad)).rejects.toThrow(/table quality, column value, row 0: expected a finite number/);
    const left = await rowsOf(store, recordingIdFor(runId, bad.recording.fileSha256));
    expect(
      Object.values(left).every((n) => n === 0),
      JSON.stringify(left),
    ).toBe(true);
  });

  it('writing a stored recording again is refused by name', async () => {
    await expect(store.writeRecording(makeBundle(runId, 1))).rejects.toThrow(/rec-1\.edf \(file hash [0-9a-f]{12}…\) is already stored/);
  });

  it('the earlier recording is untouched by the failures', async () => {
    const first = makeBundle(runId, 1);
    const id = recordingIdFor(runId, first.recording.fileSha256);
    const rows = await rowsOf(store, id);
    expect(rows).toEqual({
      recordings: 1,
      channels: 3,
      epochs: 40,
      epoch_rejections: 1,
      spectra: 3 * 2 * 2 * 2,
      epoch_band_power: 3 * 40 * 3,
      epoch_spectra: 0,
      aperiodic: 1,
      peaks: 1,
      quality: 1,
      reference_skips: 1,
      warnings: 2,
    });
    expect(await count(store, 'recordings')).toBe(2);
  });
});
