/**
 * Runs are identified by their parameters: the same parameters (in any key order) reuse the
 * run, changed parameters make a new run whose recordings are kept apart, and a recording
 * stored in one run does not count as stored in another (resumability).
 * The run id is checked against an outside hash: python3's hashlib.sha256 of the canonical
 * JSON, written out below.
 */
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/database.ts';
import { canonicalJson } from '../../ingest/store/identity.ts';
import type { Store } from '../../ingest/store/writer.ts';
import { makeBundle } from './make-bundle.ts';
import { count, sql, tempDir } from './helpers.ts';

const PARAMS = { welch: { segmentS: 4, overlapFraction: 0.5 }, fmaxHz: 45, references: ['recorded', 'average'] };
const SAME_REORDERED = { references: ['recorded', 'average'], fmaxHz: 45, welch: { overlapFraction: 0.5, segmentS: 4 } };
const CHANGED = { ...PARAMS, fmaxHz: 40 };

describe('runs', () => {
  const { dir, cleanup } = tempDir();
  const path = join(dir, 'runs.duckdb');
  let store: Store;
  beforeAll(async () => {
    store = await openStore(path, { create: true });
  });
  afterAll(async () => {
    await store.close();
    cleanup();
  });

  it('canonical JSON sorts keys at every level and the run id is its SHA-256 prefix (python3 hashlib)', async () => {
    expect(canonicalJson(SAME_REORDERED)).toBe('{"fmaxHz":45,"references":["recorded","average"],"welch":{"overlapFraction":0.5,"segmentS":4}}');
    const py = execFileSync('python3', [
      '-c',
      `import hashlib,json,sys; print(hashlib.sha256(json.dumps(json.loads(sys.argv[1]), sort_keys=True, separators=(',',':')).encode()).hexdigest()[:16])`,
      JSON.stringify(PARAMS),
    ])
      .toString()
      .trim();
    const { runId } = await store.beginRun('0.1.0', PARAMS);
    expect(runId).toBe(py);
  });

  it('the same parameters reuse the run; changed parameters make a new one', async () => {
    const a = await store.beginRun('0.1.0', PARAMS);
    const b = await store.beginRun('0.1.0', SAME_REORDERED);
    const c = await store.beginRun('0.1.0', CHANGED);
    expect(a.reused).toBe(true);
    expect(b).toEqual({ runId: a.runId, reused: true });
    expect(c.reused).toBe(false);
    expect(c.runId).not.toBe(a.runId);
    expect(await count(store, 'runs')).toBe(2);
    const stored = await sql(store, 'SELECT parameters FROM runs WHERE run_id = $1', [c.runId]);
    expect(JSON.parse(String(stored[0].parameters))).toEqual(CHANGED);
  });

  it('the same parameters with another tool version are refused, not mixed', async () => {
    await expect(store.beginRun('0.2.0', PARAMS)).rejects.toThrow(/written by bandwise 0\.1\.0, this is 0\.2\.0/);
  });

  it('a stored recording is skipped only within its own run; ids differ between runs', async () => {
    const a = await store.beginRun('0.1.0', PARAMS);
    const c = await store.beginRun('0.1.0', CHANGED);
    const bundle = makeBundle(a.runId, 11);
    const idA = await store.writeRecording(bundle);
    expect(await store.hasRecording(a.runId, bundle.recording.fileSha256)).toBe(true);
    expect(await store.hasRecording(c.runId, bundle.recording.fileSha256)).toBe(false);
    const idC = await store.writeRecording({ ...bundle, runId: c.runId });
    expect(idC).not.toBe(idA);
    expect(await count(store, 'spectra', 'recording_id = $1', [idA])).toBe(await count(store, 'spectra', 'recording_id = $1', [idC]));
  });

  it('finishRun stamps finished_at; beginRun again clears it; unknown runs are refused', async () => {
    const a = await store.beginRun('0.1.0', PARAMS);
    await store.finishRun(a.runId);
    expect((await sql(store, 'SELECT finished_at FROM runs WHERE run_id = $1', [a.runId]))[0].finished_at).toBeInstanceOf(Date);
    await store.beginRun('0.1.0', PARAMS);
    expect((await sql(store, 'SELECT finished_at FROM runs WHERE run_id = $1', [a.runId]))[0].finished_at).toBeNull();
    await expect(store.writeRecording(makeBundle('0000000000000000', 12))).rejects.toThrow(/no run 0000000000000000/);
  });

  it('writeError stores the failure; writeQuality replaces rows of the same recording and metric', async () => {
    const a = await store.beginRun('0.1.0', PARAMS);
    await store.writeError({ runId: a.runId, file: 'x.edf', step: 'read-edf', field: 'header.bytes', message: 'bad header' });
    expect(await count(store, 'ingest_errors', 'run_id = $1 AND step = $2', [a.runId, 'read-edf'])).toBe(1);
    const [rec] = await sql(store, 'SELECT recording_id FROM recordings WHERE run_id = $1', [a.runId]);
    const id = String(rec.recording_id);
    const row = { recordingId: id, channel: 'E1', stage: 'N2' as const, metric: 'cohort-distance', value: 1.2, flagged: false, reason: null };
    await store.writeQuality([row]);
    await store.writeQuality([{ ...row, value: 4.5, flagged: true, reason: 'far from the cohort' }]);
    const q = await sql(store, 'SELECT value, flagged FROM quality WHERE recording_id = $1 AND metric = $2', [id, 'cohort-distance']);
    expect(q).toEqual([{ value: 4.5, flagged: true }]);
  });

  it('participants: subject required, rows must match the header', async () => {
    await expect(store.writeParticipants(['id', 'age'], [['a', '1']])).rejects.toThrow(/no "subject" column/);
    await expect(store.writeParticipants(['subject', 'age'], [['a']])).rejects.toThrow(/row 0: has 1 values, the header has 2/);
  });

  it('an existing file is reopened with its runs; a missing file without create is refused', async () => {
    await expect(openStore(join(dir, 'missing.duckdb'))).rejects.toThrow(/database file not found/);
  });
});
