/**
 * Writing a synthetic cohort (src/core/simulate/synthetic-database.ts) into a database file of
 * the normal format: runs (the spec as parameters), participants (subject, group, age),
 * recordings, channels, spectra (reference 'recorded', averaging 'mean') and aperiodic (the
 * true drawn parameters, method 'simulated' — they are not fits). No epochs: there is no signal.
 *
 * Bulk path: the Store creates the file (storage ≤ v1.4, schema), the run and participants;
 * the recordings then go in through the same chunked appender (chunks.ts) in batches of many
 * recordings per transaction. Store.writeRecording costs a fixed ~37 ms per recording for its
 * transaction (bench-results/store-write.json, fixedMsPerRecording), which alone would be
 * ~6 min for 10,000 recordings; batching removes it. Recording ids are recordingIdFor(run,
 * file hash) as for ingested recordings.
 */
import { existsSync, statSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { electrodePosition } from '../core/montage/positions.ts';
import { drawRecording, syntheticParticipant, type SyntheticCohortSpec, type SyntheticRecording } from '../core/simulate/synthetic-database.ts';
import { appendColumns } from '../../ingest/store/chunks.ts';
import { openStore } from '../../ingest/store/database.ts';
import { sortSpectra } from '../../ingest/store/spectra-order.ts';
import { StoreError } from '../../ingest/store/errors.ts';
import { recordingIdFor } from '../../ingest/store/identity.ts';
import { tableDef } from '../../ingest/store/schema.ts';

export interface SyntheticWriteOptions {
  /** Recordings per transaction (default 100: 32,000 spectra rows at 64 channels × 5 stages). */
  batch?: number;
  toolVersion?: string;
  /** Called after each batch with the recordings written so far. */
  progress?: (done: number, total: number) => void;
}

export interface SyntheticWriteResult {
  path: string;
  runId: string;
  recordings: number;
  spectraRows: number;
  /** Time drawing spectra (model + noise), s. */
  drawS: number;
  /** Time appending and committing, s. */
  writeS: number;
  totalS: number;
  /** Database file size after the final checkpoint, bytes. */
  fileBytes: number;
}

/** Stand-in for an EDF file hash: SHA-256 of the spec seed and recording index (there is no file). */
function fakeFileSha(spec: SyntheticCohortSpec, index: number): string {
  return createHash('sha256').update(`synthetic:${spec.seed}:${index}`).digest('hex');
}

export async function writeSyntheticDatabase(file: string, spec: SyntheticCohortSpec, options: SyntheticWriteOptions = {}): Promise<SyntheticWriteResult> {
  if (existsSync(file)) throw new StoreError(`${file} exists already; the synthetic database is written to a new file`);
  const t0 = performance.now();
  const batch = options.batch ?? 100;
  const store = await openStore(file, { create: true });
  let drawMs = 0;
  let writeMs = 0;
  let runId = '';
  try {
    ({ runId } = await store.beginRun(options.toolVersion ?? 'synthetic', { synthetic: spec }, { shard: null }));
    await store.writeParticipants(
      ['subject', 'group', 'age'],
      Array.from({ length: spec.recordings }, (_, i) => {
        const p = syntheticParticipant(spec, i);
        return [p.subject, p.group, Math.round(p.age * 10) / 10];
      }),
    );
    const positions = spec.channels.map((c) => electrodePosition(c) ?? null);
    for (let start = 0; start < spec.recordings; start += batch) {
      const ta = performance.now();
      const recs: SyntheticRecording[] = [];
      for (let i = start; i < Math.min(spec.recordings, start + batch); i++) recs.push(drawRecording(spec, i));
      const tb = performance.now();
      drawMs += tb - ta;
      await store.exclusive(async () => {
        const c = store.connection;
        await c.run('BEGIN TRANSACTION');
        try {
          await appendBatch(c, spec, runId, recs, positions);
          await c.run('COMMIT');
        } catch (e) {
          await c.run('ROLLBACK');
          throw e;
        }
      });
      writeMs += performance.now() - tb;
      options.progress?.(start + recs.length, spec.recordings);
    }
    await sortSpectra(store);
    await store.finishRun(runId);
  } finally {
    await store.close();
  }
  const nc = spec.channels.length;
  return {
    path: file,
    runId,
    recordings: spec.recordings,
    spectraRows: spec.recordings * nc * spec.stages.length,
    drawS: drawMs / 1000,
    writeS: writeMs / 1000,
    totalS: (performance.now() - t0) / 1000,
    fileBytes: statSync(file).size,
  };
}

type Connection = Parameters<typeof appendColumns>[0];

async function appendBatch(
  c: Connection,
  spec: SyntheticCohortSpec,
  runId: string,
  recs: SyntheticRecording[],
  positions: ({ x: number; y: number; z: number } | null)[],
): Promise<void> {
  const nc = spec.channels.length;
  const ns = spec.stages.length;
  const nb = spec.nBins;
  const ids = recs.map((r) => recordingIdFor(runId, fakeFileSha(spec, r.index)));
  const now = new Date();
  await appendColumns(c, tableDef('recordings'), recs.length, {
    recording_id: (i) => ids[i],
    subject: (i) => recs[i].subject,
    session: () => null,
    file_name: (i) => `synthetic/${recs[i].subject}.edf`,
    file_sha256: (i) => fakeFileSha(spec, recs[i].index),
    duration_s: (i) => 30 * recs[i].nEpochs.reduce((a, b) => a + b, 0),
    run_id: () => runId,
    status: () => 'synthetic',
    n_channels: () => nc,
    epoch_length_s: () => 30,
    ingested_at: () => now,
  });
  const perRec = nc;
  await appendColumns(c, tableDef('channels'), recs.length * perRec, {
    recording_id: (i) => ids[Math.floor(i / perRec)],
    channel: (i) => spec.channels[i % perRec],
    type: () => 'EEG',
    unit: () => 'uV',
    fs_hz: () => 256,
    prefilter: () => null,
    x: (i) => positions[i % perRec]?.x ?? null,
    y: (i) => positions[i % perRec]?.y ?? null,
    z: (i) => positions[i % perRec]?.z ?? null,
  });
  const rows = recs.length * nc * ns;
  const rec = (i: number) => recs[Math.floor(i / (nc * ns))];
  const cs = (i: number) => i % (nc * ns);
  const views = recs.map((r) => Array.from({ length: nc * ns }, (_, j) => r.power.subarray(j * nb, (j + 1) * nb)));
  // the key columns of spectra and aperiodic: recording, channel, stage, reference, averaging, estimator
  const key = {
    recording_id: (i: number) => ids[Math.floor(i / (nc * ns))],
    channel: (i: number) => spec.channels[Math.floor(cs(i) / ns)],
    stage: (i: number) => spec.stages[cs(i) % ns],
    reference: () => 'recorded',
    averaging: () => 'mean',
    estimator: () => 'welch',
  };
  await appendColumns(c, tableDef('spectra'), rows, {
    ...key,
    n_epochs: (i) => rec(i).nEpochs[cs(i) % ns],
    n_segments: (i) => spec.segmentsPerEpoch * rec(i).nEpochs[cs(i) % ns],
    freq_start_hz: () => spec.freqStartHz,
    freq_step_hz: () => spec.freqStepHz,
    n_bins: () => nb,
    power: (i) => views[Math.floor(i / (nc * ns))][cs(i)],
    flagged: () => false,
    flag_reason: () => null,
  });
  await appendColumns(c, tableDef('aperiodic'), rows, {
    ...key,
    method: () => 'simulated',
    fit_lo_hz: () => 1,
    fit_hi_hz: () => 40,
    offset: (i) => rec(i).offset[cs(i)],
    exponent: (i) => rec(i).exponent[cs(i)],
    knee: () => 0,
    r2: () => null,
    rmse: () => null,
    n_peaks: () => null,
  });
}
