/**
 * Reads what a contrast needs from a bandwise database (Node's DuckDB) into the pure form of
 * src/core/contrast, and runs it (its permutations on several threads when it is large).
 */
import { openStore, type Store } from '../../ingest/store/index.ts';
import { listRuns, readSpectra, readAperiodic, readPeaks, readParticipants, readRecordedReferences, readChannelPositions } from './store-read.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import type { ContrastData, Exclusion, SpectrumRow } from '../core/contrast/data.ts';
import { measureNeeds } from '../core/contrast/measure.ts';
import { assembleContrast, type AssembledContrast } from '../core/contrast/assemble.ts';
import type { CompareResult } from '../core/contrast/run.ts';
import type { ProgressCallback } from '../core/stats/index.ts';
import { compareOnThreads, defaultThreads, sharedAssembly } from './compare-threads.ts';
import type { Stage } from '../core/stages.ts';

export interface LoadedContrast {
  runId: string;
  runParameters: unknown;
  toolVersion: string;
  data: ContrastData;
}

/** The run a contrast reads: the one given, or the only/most recent finished one. */
export async function chooseRun(store: Store, runId?: string): Promise<{ runId: string; parameters: unknown; toolVersion: string }> {
  const runs = await listRuns(store);
  if (runs.length === 0) throw new Error('the database holds no ingest run');
  const chosen = runId ? runs.find((r) => r.runId === runId) : [...runs].reverse().find((r) => r.finishedAt !== null) ?? runs[runs.length - 1];
  if (!chosen) throw new Error(`no run ${runId} in the database (runs: ${runs.map((r) => r.runId).join(', ')})`);
  return { runId: chosen.runId, parameters: chosen.parameters, toolVersion: chosen.toolVersion };
}

export async function loadContrastData(store: Store, c: Contrast, exclusions: Exclusion[], runId?: string): Promise<LoadedContrast> {
  const run = await chooseRun(store, runId);
  const stages: Stage[] = c.design === 'paired' && c.stages ? [...c.stages] : [c.stage];
  const needs = measureNeeds(c.measure);
  const rows: SpectrumRow[] = [];
  let axis = { freqStartHz: 0, freqStepHz: 0, nBins: 0 };
  const aperiodic: ContrastData['aperiodic'] = [];
  const peaks: ContrastData['peaks'] = [];
  for (const stage of stages) {
    const q = { runId: run.runId, stage, reference: c.reference, averaging: c.averaging };
    const m = await readSpectra(store, { ...q, channels: c.channels === 'all' ? undefined : c.channels });
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
  if (rows.length === 0) throw new Error(`no ${stages.join('/')} spectra with reference ${c.reference} and averaging ${c.averaging} in run ${run.runId}`);
  const table = await readParticipants(store);
  const participants = table.rows.map((r) => Object.fromEntries(table.columns.map((col, i) => [col.name, r[i]])));
  // 'recorded' spectra are pooled only when recorded against one reference (src/core/contrast/recorded-references.ts)
  const recordedReferences = c.reference === 'recorded' ? await readRecordedReferences(store, run.runId) : undefined;
  // the channels' positions, for the neighbours of a spatial cluster test (src/core/contrast/channel-layout.ts)
  const positions = await readChannelPositions(store, run.runId);
  return { runId: run.runId, runParameters: run.parameters, toolVersion: run.toolVersion, data: { spectra: { ...axis, rows }, aperiodic, peaks, participants, exclusions, recordedReferences, positions } };
}

export interface CompareRun extends CompareResult {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown };
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
    loaded = await loadContrastData(store, c, exclusions, runId);
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
  return { ...result, database: { file: dbPath.split(/[\\/]/).pop()!, runId: info.runId, toolVersion: info.toolVersion, ingestParameters: info.runParameters } };
}
