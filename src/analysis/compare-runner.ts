/**
 * Reads what a contrast needs from a bandwise database (Node's DuckDB) into the pure form of
 * src/core/contrast, and runs it (its permutations on several threads when it is large).
 */
import { openStore, StoreError, type Store } from '../../ingest/store/index.ts';
import { listRuns, readSpectra, readAperiodic, readPeaks, readParticipants, readRecordedReferences, readStoredStages } from './store-read.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import type { ContrastData, Exclusion, SpectrumRow } from '../core/contrast/data.ts';
import { measureNeeds } from '../core/contrast/measure.ts';
import { assembleContrast, ContrastDataError, type AssembledContrast } from '../core/contrast/assemble.ts';
import type { CompareResult } from '../core/contrast/run.ts';
import type { ProgressCallback } from '../core/stats/index.ts';
import { compareOnThreads, defaultThreads, sharedAssembly } from './compare-threads.ts';
import type { Stage } from '../core/stages.ts';

export interface LoadedContrast {
  runId: string;
  runParameters: unknown;
  toolVersion: string;
  /** false: the run named with --run had not finished (interrupted or still running); its cohort may be partial */
  runFinished: boolean;
  data: ContrastData;
}

export interface ChosenRun {
  runId: string;
  parameters: unknown;
  toolVersion: string;
  finished: boolean;
}

/**
 * The run an analysis reads: the one named, finished or not, or else the most recent finished
 * one. An unfinished run (interrupted, or still being written) is never taken unasked: its
 * cohort may lack recordings the cohort table lists.
 */
export async function chooseRun(store: Store, runId?: string, file = 'the database'): Promise<ChosenRun> {
  const runs = await listRuns(store);
  if (runs.length === 0) throw new StoreError(`${file} holds no ingest run`);
  const chosen = runId ? runs.find((r) => r.runId === runId) : [...runs].reverse().find((r) => r.finishedAt !== null);
  if (runId && !chosen) throw new StoreError(`${file} has no run ${runId} (its runs: ${runs.map((r) => r.runId).join(', ')})`);
  if (!chosen) {
    const last = runs[runs.length - 1];
    const n = await recordingCount(store, last.runId);
    throw new StoreError(
      `${file} holds no finished ingest run: run ${last.runId} stopped before its end with ${n} recording${n === 1 ? '' : 's'} stored. ` +
        `Rerun the same ingest to finish it, or name the run with --run ${last.runId} to analyse what it stored`,
    );
  }
  return { runId: chosen.runId, parameters: chosen.parameters, toolVersion: chosen.toolVersion, finished: chosen.finishedAt !== null };
}

async function recordingCount(store: Store, runId: string): Promise<number> {
  return store.exclusive(async () => Number((await store.connection.runAndReadAll('SELECT count(*) AS n FROM recordings WHERE run_id = $1', [runId])).getRowObjectsJS()[0].n));
}

/** The note an analysis of an unfinished run carries (result notes, command output). */
export function unfinishedRunNote(runId: string): string {
  return `run ${runId} is unfinished (interrupted or still being written): the analysis used the recordings it had stored, which may not be the whole cohort`;
}

export async function loadContrastData(store: Store, c: Contrast, exclusions: Exclusion[], runId?: string, file?: string): Promise<LoadedContrast> {
  const run = await chooseRun(store, runId, file);
  const stages: Stage[] = c.design === 'paired' && c.stages ? [...c.stages] : [c.stage];
  const needs = measureNeeds(c.measure);
  const rows: SpectrumRow[] = [];
  let axis = { freqStartHz: 0, freqStepHz: 0, nBins: 0 };
  const aperiodic: ContrastData['aperiodic'] = [];
  const peaks: ContrastData['peaks'] = [];
  for (const stage of stages) {
    const q = { runId: run.runId, stage, reference: c.reference, averaging: c.averaging };
    const m = await readSpectra(store, q);
    if (m.nBins > 0) {
      if (axis.nBins > 0 && (axis.nBins !== m.nBins || axis.freqStepHz !== m.freqStepHz)) throw new Error('stages have different frequency axes');
      axis = { freqStartHz: m.freqStartHz, freqStepHz: m.freqStepHz, nBins: m.nBins };
    }
    for (let i = 0; i < m.subjects.length; i++) {
      rows.push({
        subject: m.subjects[i],
        session: m.sessions[i],
        channel: m.channels[i],
        stage,
        nEpochs: m.nEpochs[i],
        flagged: m.flagged[i] === 1,
        flagReason: m.flagReasons[i],
        power: m.power.subarray(i * m.nBins, (i + 1) * m.nBins),
      });
    }
    if (needs.aperiodic) {
      for (const a of await readAperiodic(store, { ...q, method: c.aperiodicMethod })) {
        aperiodic.push({ subject: a.subject, session: a.session, channel: a.channel, stage, offset: a.offset, exponent: a.exponent, knee: a.knee });
      }
    }
    if (needs.peaks) {
      for (const p of await readPeaks(store, { ...q, method: c.aperiodicMethod })) {
        peaks.push({ subject: p.subject, session: p.session, channel: p.channel, stage, centerHz: p.centerHz, height: p.height, bandwidthHz: p.bandwidthHz });
      }
    }
  }
  if (rows.length === 0) {
    const stored = await readStoredStages(store, { runId: run.runId, reference: c.reference, averaging: c.averaging });
    throw new ContrastDataError(
      `no ${stages.join('/')} spectra with reference ${c.reference} and averaging ${c.averaging} in run ${run.runId}; ` +
        (stored.length > 0 ? `stored stages: ${stored.join(', ')}` : 'no stage has spectra of that reference and averaging'),
    );
  }
  const table = await readParticipants(store);
  const participants = table.rows.map((r) => Object.fromEntries(table.columns.map((col, i) => [col.name, r[i]])));
  // 'recorded' spectra are pooled only when recorded against one reference (src/core/contrast/recorded-references.ts)
  const recordedReferences = c.reference === 'recorded' ? await readRecordedReferences(store, run.runId) : undefined;
  return { runId: run.runId, runParameters: run.parameters, toolVersion: run.toolVersion, runFinished: run.finished, data: { spectra: { ...axis, rows }, aperiodic, peaks, participants, exclusions, recordedReferences } };
}

export interface CompareRun extends CompareResult {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown; runFinished: boolean };
}

export interface CompareOptions {
  /** threads for the permutations (default: the machine's cores for a large contrast, else 1; see compare-threads.ts) */
  threads?: number;
}

/**
 * The run's identity, the assembled contrast and the threads for its permutations (with more
 * than one, the assembly's matrices are in shared memory); the rows read and the unshared
 * matrices are garbage once this returns.
 */
async function loadAssembled(dbPath: string, c: Contrast, exclusions: Exclusion[], runId: string | undefined, threads: number | undefined): Promise<{ info: Omit<LoadedContrast, 'data'>; assembled: AssembledContrast; threads: number }> {
  const store = await openStore(dbPath, { readOnly: true });
  let loaded: LoadedContrast;
  try {
    loaded = await loadContrastData(store, c, exclusions, runId, dbPath);
  } finally {
    // closed before the permutations, so DuckDB's cached pages are not held during them
    await store.close();
  }
  const { data, ...info } = loaded;
  const assembled = assembleContrast(c, data);
  const n = threads ?? defaultThreads(assembled, c.permutations);
  return { info, assembled: n > 1 ? sharedAssembly(assembled) : assembled, threads: n };
}

/**
 * The contrast on a database: read, assembled, then prepareAssembled + runPermutations +
 * finishCompare (src/core/contrast/run.ts) on this thread, or with the permutations split over
 * worker threads too (compare-threads.ts); either way the result equals compare() on the rows read.
 */
export async function compareDatabase(dbPath: string, c: Contrast, exclusions: Exclusion[], onProgress?: ProgressCallback, runId?: string, options: CompareOptions = {}): Promise<CompareRun> {
  if (options.threads !== undefined && !(Number.isInteger(options.threads) && options.threads >= 1)) throw new RangeError(`invalid number of threads: ${options.threads}`);
  const { info, assembled, threads } = await loadAssembled(dbPath, c, exclusions, runId, options.threads);
  const result = await compareOnThreads(c, assembled, threads, onProgress);
  const notes = info.runFinished ? result.notes : [unfinishedRunNote(info.runId), ...result.notes];
  return { ...result, notes, database: { file: dbPath.split(/[\\/]/).pop()!, runId: info.runId, toolVersion: info.toolVersion, ingestParameters: info.runParameters, runFinished: info.runFinished } };
}
