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
import { readPositionsFile } from './cohort/positions.ts';
import type { CoordinateUnit } from '../src/core/montage/electrodes-file.ts';
import { resolveIngestParams, type IngestParams, type PipelineProgress } from './pipeline.ts';
import { IngestPool, WorkerTaskError } from './pool.ts';
import { openStore } from './store/database.ts';
import { DiskFullError, isDiskFull } from './store/errors.ts';
import { cohortQualityPass } from './store/merge.ts';
import { runIdentity } from './store/identity.ts';
import { refuseClashes } from '../src/files/output-files.ts';
import { refuseSharedRecordings } from './duplicate-files.ts';
import { DEFAULT_FILE_NAME_FORM, fileNamer, type FileNameForm } from './file-names.ts';
import type { IngestErrorIn } from './store/writer.ts';
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
  /** Electrode positions file for every recording that has none of its own (ingest/cohort/positions.ts). */
  positions?: string;
  /** Unit of a positions file without a _coordsystem.json beside it (default mm). */
  positionsUnit?: CoordinateUnit;
  /**
   * Aborted (Ctrl-C, SIGTERM): no more recordings are taken, the workers stop, a write in
   * progress finishes (its one transaction commits or rolls back), the database is checkpointed
   * and closed, and the summary says `interrupted`; the run stays unfinished, a rerun resumes.
   */
  signal?: AbortSignal;
  /** What the database keeps of each file's path (ingest/file-names.ts; default: the file name alone). */
  fileNames?: FileNameForm;
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
  /** True when the signal stopped the run before its end (the run is unfinished). */
  interrupted: boolean;
  /** Recordings of this ingest neither stored, skipped nor failed (an interrupted run). */
  notProcessed: number;
  /** Rows of the warnings table for this run (its recordings stored now or earlier). */
  warnings: number;
}

export { parseShard } from './cohort/shard.ts';

/** Failures written to ingest_errors together (one append of at most this many rows). */
const ERROR_BATCH = 1000;

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
    cohort = await discoverCohort(cohortPathOrBidsFolder, { rowProblems: 'per-recording', positionsUnit: options.positionsUnit });
    if (options.positions) {
      // named by its file name alone: messages and warnings carry no absolute path
      const shared = await readPositionsFile(path.resolve(options.positions), path.basename(options.positions), options.positionsUnit ?? 'mm');
      for (const rec of cohort.recordings) rec.positions ??= shared;
    }
  } catch (e) {
    await pool.close();
    throw e;
  }
  // what the database and the messages say of each file's path (never more than --file-names allows)
  const namer = fileNamer(options.fileNames ?? DEFAULT_FILE_NAME_FORM, cohort.root);
  const shown = namer.failed;
  try {
    // the database never overwrites the cohort table, a recording or a scoring file
    refuseClashes(
      [
        ...(cohort.source === 'table' ? [{ what: 'the cohort table', file: cohortPathOrBidsFolder }] : []),
        ...cohort.recordings.flatMap((r) => [
          { what: `the recording of row ${r.row}`, file: r.recordingPath },
          ...(r.scoringPath ? [{ what: `the scoring file of row ${r.row}`, file: r.scoringPath }] : []),
        ]),
      ],
      [{ what: '--out', file: outDb }],
    );
    // rows sharing a recording are refused, all of them, before any work (the whole cohort, so every shard agrees)
    await refuseSharedRecordings(cohort.recordings, shown);
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
  const summary: IngestSummary = { runId, done: 0, skipped: 0, failed: [], cohortQualityRows: 0, interrupted: false, notProcessed: 0, warnings: 0 };
  // an interrupt stops the workers at once; the lanes then take no more recordings
  const onAbort = () => {
    summary.interrupted = true;
    void pool.close();
  };
  if (options.signal?.aborted) onAbort();
  else options.signal?.addEventListener('abort', onAbort, { once: true });
  const opened = openStore(outDb, { create: true });
  const ready = opened.then(async (store) => {
    const begun = await store.beginRun(options.toolVersion ?? packageVersion(), params, { shard: shard ? `${shard.k}/${shard.n}` : null });
    if (begun.runId !== runId) throw new Error(`run id ${begun.runId} from the store, ${runId} from the parameters`);
    const names = cohort.columns.map((c) => c.name);
    await store.writeParticipants(
      names,
      cohort.participants.map((p) => names.map((n) => p[n] ?? null)),
    );
    progress?.({ kind: 'start', runId, reused: begun.reused, total: recordings.length });
    return store;
  });
  let failure: unknown = null;
  let storedSoFar = 0;
  const diskFull = (e: unknown, during: string) => new DiskFullError(outDb, during, storedSoFar, e);
  try {
    // messages name files relative to the cohort root too
    const rootPrefix = cohort.root.endsWith(path.sep) ? cohort.root : cohort.root + path.sep;
    // set when the run must stop (disk full): recordings still in flight are neither written nor logged
    let stopped = false;
    // failures go to ingest_errors in batches: a row that fails costs a few hundred bytes, not a write of its own
    const pendingErrors: IngestErrorIn[] = [];
    const flushErrors = async () => {
      if (pendingErrors.length > 0) await (await ready).writeErrors(pendingErrors.splice(0));
    };
    const fail = async (rec: CohortRecording, step: string, field: string | null, fullMessage: string) => {
      await ready;
      if (stopped) return;
      const message = namer.message(rec, fullMessage).split(rootPrefix).join('');
      summary.failed.push({ file: shown(rec), step, message });
      pendingErrors.push({ runId, file: shown(rec), step, field, message });
      progress?.({ kind: 'recording', file: shown(rec), state: 'failed', message });
      if (pendingErrors.length >= ERROR_BATCH) await flushErrors();
    };
    const one = async (rec: CohortRecording): Promise<void> => {
      if (rec.problem) return fail(rec, 'cohort', rec.problem.column, rec.problem.message);
      let bundle;
      try {
        // the worker hashes the file and asks here whether that recording is stored (skipped if so)
        bundle = await pool.process(rec, params, runId, {
          onProgress: (p) => progress?.({ kind: 'progress', file: shown(rec), ...p }),
          isStored: async (sha) => {
            const store = await ready;
            const stored = await store.storedRecording(runId, sha);
            if (stored && (stored.subject !== rec.subject || stored.session !== rec.session)) {
              const name = (subject: string, session: string | null) => `subject ${subject}${session ? `, session ${session}` : ''}`;
              throw new WorkerTaskError(
                'cohort',
                'subject',
                `row ${rec.row} (${name(rec.subject, rec.session)}): this recording is stored in run ${runId} under ${name(stored.subject, stored.session)}; ` +
                  `the table now names ${name(rec.subject, rec.session)}. Ingest into a new database file to store it under the new name`,
              );
            }
            // stored before under another form of its name (--file-names changed): the name follows the form asked now
            const names = stored && { fileName: namer.stored(rec, sha), scoringSource: namer.scoringSource(stored.scoringSource) };
            if (stored && names && (stored.fileName !== names.fileName || stored.scoringSource !== names.scoringSource))
              await store.renameRecording(runId, sha, names);
            return stored !== null;
          },
        });
      } catch (e) {
        await ready; // a store that did not open is the error to report, not this recording's
        if (summary.interrupted) return; // stopped by the interrupt: not a failure of this recording
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
      if (stopped || summary.interrupted) return;
      bundle.recording.fileName = namer.stored(rec, bundle.recording.fileSha256);
      bundle.recording.scoringSource = namer.scoringSource(bundle.recording.scoringSource);
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
      while (next < recordings.length && !stopped && !summary.interrupted) await one(recordings[next++]);
    });
    // every lane settles before the pool and the store close; the first error is the one reported
    // (the store's own, when it did not open or begin the run)
    const ended = await Promise.allSettled([ready, ...lanes]);
    const laneError = ended.find((r): r is PromiseRejectedResult => r.status === 'rejected');
    if (laneError) throw laneError.reason;
    await flushErrors();
    const store = await ready;
    if (summary.interrupted) {
      // unfinished: no cohort pass, no finish mark; the close below checkpoints what was committed
      summary.notProcessed = recordings.length - summary.done - summary.skipped - summary.failed.length;
      return summary;
    }
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
    options.signal?.removeEventListener('abort', onAbort);
    await pool.close();
    // a close that fails (its checkpoint on a full disk) must not hide the first error
    const store = await opened.catch(() => null);
    await store?.close().catch((e: unknown) => {
      if (failure === null) throw isDiskFull(e) ? diskFull(e, 'closing the database (checkpoint)') : e;
    });
  }
}
