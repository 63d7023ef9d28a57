// Merging shards carries the warnings table: a recording's warnings go with it (once, when the
// recording is in two shards), and a warning of no recording is kept once.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/database.ts';
import { recordingIdFor } from '../../ingest/store/identity.ts';
import { mergeShards } from '../../ingest/store/merge.ts';
import { makeBundle } from './make-bundle.ts';
import { sql, tempDir } from './helpers.ts';

const { dir, cleanup } = tempDir();
const PARAMS = { seed: 3 };
let runId = '';

/** Shard k of 2 with the recordings of the given seeds, and one warning about a file with no recording row. */
async function shard(k: number, seeds: number[]): Promise<string> {
  const file = join(dir, `shard-${k}.duckdb`);
  const store = await openStore(file, { create: true });
  ({ runId } = await store.beginRun('0.1.0', PARAMS, { shard: `${k}/2` }));
  for (const s of seeds) await store.writeRecording(makeBundle(runId, s));
  await sql(store, "INSERT INTO warnings VALUES ($1, NULL, 'cohort.tsv', 'cohort', NULL, 'an invented cohort-level note', now())", [runId]);
  await store.finishRun(runId);
  await store.close();
  return file;
}

let merged = '';
beforeAll(async () => {
  // recording 2 is in both shards (identical rows): kept once with its warnings
  const files = [await shard(1, [1, 2]), await shard(2, [2, 3])];
  merged = join(dir, 'merged.duckdb');
  const summary = await mergeShards(files, merged);
  expect(summary).toMatchObject({ recordings: 3, duplicatesDropped: 1 });
});
afterAll(cleanup);

describe('merge of the warnings table', () => {
  it("keeps each recording's warnings once with it, and the warning of no recording once", async () => {
    const store = await openStore(merged, { readOnly: true });
    try {
      const rows = await sql(store, 'SELECT recording_id, file, step, message FROM warnings ORDER BY file, step, message');
      // make-bundle.ts gives every recording 2 warnings: 3 recordings × 2 + 1 cohort-level note
      expect(rows.length).toBe(7);
      for (const s of [1, 2, 3]) {
        const id = recordingIdFor(runId, makeBundle(runId, s).recording.fileSha256);
        expect(rows.filter((r) => r.recording_id === id).map((r) => r.file)).toEqual([`rec-${s}.edf`, `rec-${s}.edf`]);
      }
      expect(rows.filter((r) => r.recording_id === null)).toEqual([
        { recording_id: null, file: 'cohort.tsv', step: 'cohort', message: 'an invented cohort-level note' },
      ]);
    } finally {
      await store.close();
    }
  });
});
