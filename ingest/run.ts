/**
 * A whole cohort into the database: discover → begin (or resume) the run → skip recordings
 * already stored → process the rest in the worker pool → write each in its own transaction →
 * failures to ingest_errors while the others go on → cohort-level quality pass (robust distance of
 * each spectrum from the cohort median, ingest/store/merge.ts) → summary.
 *
 * Resumable and idempotent: a recording is identified by (run, file SHA-256), and the run by its
 * parameters, so a rerun after an interruption (even SIGKILL: DuckDB replays its write-ahead log,
 * and a half-written transaction is never committed) writes only what is missing.
 */
import { selectShard, type ShardSpec } from './cohort/shard.ts';
import path from 'node:path';
import { discoverCohort } from './cohort/discover.ts';
import type { CohortRecording } from './cohort/types.ts';
import { resolveIngestParams, type IngestParams, type PipelineProgress } from './pipeline.ts';
import { IngestPool, WorkerTaskError } from './pool.ts';
import { openStore } from './store/database.ts';
import { DiskFullError, isDiskFull } from './store/errors.ts';
import { cohortQualityPass } from './store/merge.ts';
import { runIdentity } from './store/identity.ts';
import { sortSpectra } from './store/spectra-order.ts';
// as a module, so the build copies the version into dist/ (no path from ingest/ to it holds there)
import { version } from '../package.json';

export type { ShardSpec as Shard } from './cohort/shard.ts';

export interface IngestOptions {
  params?: Partial<IngestParams>;
  /** Worker threads (default: one per core). */
  jobs?: number;
  /** Process only recordings i (0-based, table order) with i mod N = K − 1. */
  shard?: ShardSpec | null;
  /** Tool version recorded in runs (default: package.json's). */
  toolVersion?: string;
}

export type IngestEvent =
  | { kind: 'start'; runId: string; reused: boolean; total: number }
  | { kind: 'progress'; file: string; step: PipelineProgress['step']; done: number; total: number }
  | { kind: 'recording'; file: string; state: 'done' | 'skipped' | 'failed'; message?: string; channelSamples?: number };

export interface IngestFailure {
  file: string;
  step: string;
  message: string;
}

export interface IngestSummary {
  runId: string;
  done: number;
  skipped: number;
  failed: IngestFailure[];
  /** Rows written by the cohort-level quality pass (robust distance from the cohort median). */
  cohortQualityRows: number;
  /** Rows of the warnings table for this run (its recordings stored now or earlier). */
  warnings: number;
}

export { parseShard } from './cohort/shard.ts';

function packageVersion(): string {
  return version;
}

export async function runIngest(
  cohortPathOrBidsFolder: string,
  outDb: string,
  options: IngestOptions = {},
  progress?: (e: IngestEvent) => void,
): Promise<IngestSummary> {
  const params = resolveIngestParams(options.params);
  // the workers start first: their start (loading the pipeline's modules) overlaps the discovery
  const pool = new IngestPool(options.jobs);
  let cohort: Awaited<ReturnType<typeof discoverCohort>>;
  try {
    // rows that cannot be ingested on their own (duplicate subject, file missing or not a regular file) fail alone
    cohort = await discoverCohort(cohortPathOrBidsFolder, { rowProblems: 'per-recording' });
  } catch (e) {
    await pool.close();
    throw e;
  }
  const shard = options.shard ?? null;
  // a stable 1/N share by sorted subject, session and path (ingest/cohort/shard.ts)
  const recordings = shard ? selectShard(cohort.recordings, shard.k, shard.n) : cohort.recordings;
  // the run is named by its parameters (beginRun derives the same id), so the workers can take
  // their first recordings while the store opens: each hashes its file, then waits for the store
  // to say whether that recording is stored already
  const runId = runIdentity(params).runId;
  const summary: IngestSummary = { runId, done: 0, skipped: 0, failed: [], cohortQualityRows: 0, warnings: 0 };
  const opened = openStore(outDb, { create: true });
  const ready = opened.then(async (store) => {
    const begun = await store.beginRun(options.toolVersion ?? packageVersion(), params, { shard: shard ? `${shard.k}/${shard.n}` : null });
    if (begun.runId !== runId) throw new Error(`run id ${begun.runId} from the store, ${runId} from the parameters`);
    const names = cohort.columns.map((c) => c.name);
    await store.writeParticipants(names, cohort.participants.map((p) => names.map((n) => p[n] ?? null)));
    progress?.({ kind: 'start', runId, reused: begun.reused, total: recordings.length });
    return store;
  });
  let failure: unknown = null;
  let storedSoFar = 0;
  const diskFull = (e: unknown, during: string) => new DiskFullError(outDb, during, storedSoFar, e);
  try {
    // file names relative to the cohort root: no absolute paths (which may name people) in the database
    const shown = (rec: CohortRecording) => path.relative(cohort.root, rec.recordingPath) || path.basename(rec.recordingPath);
    // messages name files relative to the cohort root too
    const rootPrefix = cohort.root.endsWith(path.sep) ? cohort.root : cohort.root + path.sep;
    // set when the run must stop (disk full): recordings still in flight are neither written nor logged
    let stopped = false;
    const fail = async (rec: CohortRecording, step: string, field: string | null, fullMessage: string) => {
      const store = await ready;
      if (stopped) return;
      const message = fullMessage.split(rootPrefix).join('');
      summary.failed.push({ file: shown(rec), step, message });
      await store.writeError({ runId, file: shown(rec), step, field, message });
      progress?.({ kind: 'recording', file: shown(rec), state: 'failed', message });
    };
    const one = async (rec: CohortRecording): Promise<void> => {
      if (rec.problem) return fail(rec, 'cohort', rec.problem.column, rec.problem.message);
      let bundle;
      try {
        // the worker hashes the file and asks here whether that recording is stored (skipped if so)
        bundle = await pool.process(rec, params, runId, {
          onProgress: (p) => progress?.({ kind: 'progress', file: shown(rec), ...p }),
          isStored: async (sha) => (await ready).hasRecording(runId, sha),
        });
      } catch (e) {
        await ready; // a store that did not open is the error to report, not this recording's
        const step = e instanceof WorkerTaskError ? e.step : 'process';
        return fail(rec, step, e instanceof WorkerTaskError ? e.field : null, (e as Error).message);
      }
      const store = await ready;
      if (bundle === 'skipped') {
        summary.skipped++;
        storedSoFar++;
        progress?.({ kind: 'recording', file: shown(rec), state: 'skipped' });
        return;
      }
      if (stopped) return;
      bundle.recording.fileName = shown(rec);
      try {
        await store.writeRecording(bundle);
      } catch (e) {
        // a full disk fails every later write too: stop, keep what was committed, say so plainly
        if (isDiskFull(e)) {
          stopped = true;
          throw diskFull(e, `writing ${shown(rec)}`);
        }
        return fail(rec, 'write', null, (e as Error).message);
      }
      summary.done++;
      storedSoFar++;
      const channelSamples = bundle.channels.reduce((s, c) => s + c.fsHz * bundle.recording.durationS, 0);
      progress?.({ kind: 'recording', file: shown(rec), state: 'done', channelSamples });
    };
    // a few recordings in flight beyond the workers (hashing, writing), never the whole cohort at once
    let next = 0;
    const lanes = Array.from({ length: Math.min(recordings.length, pool.size + 1) }, async () => {
      while (next < recordings.length && !stopped) await one(recordings[next++]);
    });
    // every lane settles before the pool and the store close; the first error is the one reported
    // (the store's own, when it did not open or begin the run)
    const ended = await Promise.allSettled([ready, ...lanes]);
    const laneError = ended.find((r): r is PromiseRejectedResult => r.status === 'rejected');
    if (laneError) throw laneError.reason;
    const store = await ready;
    try {
      // cohort pass once everything is in (a shard sees only its part; merging reruns the pass)
      summary.cohortQualityRows = await cohortQualityPass(store);
      await sortSpectra(store); // rows of this and earlier runs in (stage, reference, averaging, recording, channel) order
      summary.warnings = await store.warningCount(runId);
      await store.finishRun(runId);
    } catch (e) {
      throw isDiskFull(e) ? diskFull(e, 'finishing the run (cohort quality pass, spectra order, checkpoint)') : e;
    }
    return summary;
  } catch (e) {
    failure = e;
    throw e;
  } finally {
    await pool.close();
    // a close that fails (its checkpoint on a full disk) must not hide the first error
    const store = await opened.catch(() => null);
    await store?.close().catch((e: unknown) => {
      if (failure === null) throw isDiskFull(e) ? diskFull(e, 'closing the database (checkpoint)') : e;
    });
  }
}
