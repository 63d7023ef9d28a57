// What a contrast reads, over duckdb-wasm: the dashboard's twin of src/analysis/compare-runner.ts
// (loadContrastData), filling src/core/contrast's ContrastData the same way, row for row.
import type { AperiodicRow, ContrastData, Exclusion, PeakRow, RecordedReference, SpectrumRow } from '../../core/contrast/data.ts';
import { measureNeeds } from '../../core/contrast/measure.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { Stage } from '../../core/stages.ts';
import { listColumnRowsInto, numberColumn, stringColumn } from './arrow-rows.ts';
import { participants, type CohortSchema, type RunInfo } from './queries.ts';
import { COHORT, literal, resultBatches, type SqlClient } from './sql-client.ts';

/** The run the views read: the most recent finished one (as the command line); an unfinished run may be a partial cohort. */
export function chooseRun(runs: readonly RunInfo[]): RunInfo {
  if (runs.length === 0) throw new Error('the database holds no ingest run');
  const run = [...runs].reverse().find((r) => r.finishedAt !== null);
  if (!run) throw new Error(`the database holds no finished ingest run (run ${runs[runs.length - 1].runId} stopped before its end): rerun the ingest to finish it`);
  return run;
}

export interface SpectraKey {
  runId: string;
  stage: Stage;
  reference: string;
  averaging: string;
}

/** Below this many stored values (4 MB) the power lists come in one result, not a stream (which costs a connection and several round trips to the engine). */
const STREAM_MIN_VALUES = 1 << 20;

/**
 * Stored spectra of one run × stage × reference × averaging, ordered by subject, session, recording,
 * channel; with maxHz, each list only up to that frequency (the axis start unchanged). Two reads: the keys in that order (small), then the power lists in storage order, each
 * copied into its row's place of one Float32Array — streamed as they arrive when there are many,
 * so the engine never sorts (nor holds) the lists and the page never holds them twice.
 */
export async function contrastSpectra(
  db: SqlClient,
  q: SpectraKey,
  maxHz?: number,
): Promise<{ freqStartHz: number; freqStepHz: number; nBins: number; rows: SpectrumRow[] }> {
  const from = `FROM ${COHORT}.spectra s JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(q.runId)} AND s.stage = ${literal(q.stage)}
       AND s.reference = ${literal(q.reference)} AND s.averaging = ${literal(q.averaging)}`;
  // the keys, with the count that decides how the lists are read
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, s.recording_id::VARCHAR AS recording_id,
            s.channel::VARCHAR AS channel, s.n_epochs::DOUBLE AS n_epochs, s.flagged AS flagged, s.flag_reason::VARCHAR AS flag_reason,
            s.freq_start_hz::DOUBLE AS f0, s.freq_step_hz::DOUBLE AS df, s.n_bins::DOUBLE AS n_bins
     ${from}
     ORDER BY r.subject, r.session NULLS FIRST, s.recording_id, s.channel`,
  );
  performance.mark('bandwise:spectra-keys');
  const f0 = numberColumn(t, 'f0');
  const df = numberColumn(t, 'df');
  const nb = numberColumn(t, 'n_bins');
  for (let i = 1; i < t.numRows; i++) {
    if (f0[i] !== f0[0] || df[i] !== df[0] || nb[i] !== nb[0]) {
      throw new Error(`spectra of ${q.stage}/${q.reference}/${q.averaging}: row ${i} has frequency axis ${f0[i]} + k·${df[i]} Hz × ${nb[i]}, the first ${f0[0]} + k·${df[0]} Hz × ${nb[0]}`);
    }
  }
  const nBins = t.numRows > 0 ? Math.min(nb[0], maxHz === undefined ? nb[0] : binsUpTo(f0[0], df[0], maxHz)) : 0;
  // the first nBins of each list (list_slice counts from 1, end included)
  const powerSql = `SELECT s.recording_id::VARCHAR AS recording_id, s.channel::VARCHAR AS channel,
                           ${t.numRows > 0 && nBins < nb[0] ? `list_slice(s.power, 1, ${nBins})` : 's.power'} AS power ${from}`;
  const subject = stringColumn(t, 'subject');
  const recording = stringColumn(t, 'recording_id');
  const channel = stringColumn(t, 'channel');
  const place = new Map<string, number>();
  for (let i = 0; i < t.numRows; i++) place.set(`${recording[i]}\u0000${channel[i]}`, i);
  const power = new Float32Array(t.numRows * nBins);
  let copied = 0;
  const batches = t.numRows * nBins < STREAM_MIN_VALUES ? (await db.query(powerSql)).batches : resultBatches(db, powerSql);
  for await (const batch of batches) {
    const rec = batch.getChild('recording_id')!;
    const ch = batch.getChild('channel')!;
    listColumnRowsInto(batch, 'power', nBins, (i) => {
      const at = place.get(`${rec.get(i) as string}\u0000${ch.get(i) as string}`);
      if (at === undefined) throw new Error(`spectra of ${q.stage}/${q.reference}/${q.averaging}: the power read has a row (${rec.get(i)}, ${ch.get(i)}) the keys read has not`);
      return at;
    }, power);
    copied += batch.numRows;
  }
  if (copied !== t.numRows) throw new Error(`spectra of ${q.stage}/${q.reference}/${q.averaging}: ${t.numRows} keys but ${copied} power lists`);
  const nEpochs = numberColumn(t, 'n_epochs');
  const session = t.getChild('session')!;
  const flagged = t.getChild('flagged')!;
  const reason = t.getChild('flag_reason')!;
  const rows: SpectrumRow[] = new Array(t.numRows);
  for (let i = 0; i < t.numRows; i++) {
    const s = session.get(i) as string | null;
    const why = reason.get(i) as string | null;
    rows[i] = {
      subject: subject[i],
      session: s ?? null,
      channel: channel[i],
      stage: q.stage,
      nEpochs: nEpochs[i],
      flagged: flagged.get(i) === true,
      flagReason: why ?? null,
      power: power.subarray(i * nBins, (i + 1) * nBins),
    };
  }
  return { freqStartHz: t.numRows > 0 ? f0[0] : 0, freqStepHz: t.numRows > 0 ? df[0] : 0, nBins, rows };
}

/**
 * Bins k = 0, 1, … whose frequency f0 + k·df is at most maxHz (with measureLayout's 1e-9 Hz
 * tolerance, so a measure up to maxHz finds the same bins as in the whole list); at least one.
 */
export function binsUpTo(f0: number, df: number, maxHz: number): number {
  let k = Math.max(0, Math.floor((maxHz - f0) / df));
  while (f0 + (k + 1) * df <= maxHz + 1e-9) k++;
  while (k > 0 && f0 + k * df > maxHz + 1e-9) k--;
  return k + 1;
}

/** Highest frequency a contrast's measure reads from the stored lists (Hz), undefined for all of it. */
export function contrastMaxHz(c: Contrast): number | undefined {
  return c.measure === 'log-psd' || c.measure === 'residual' ? c.fmaxHz : undefined;
}

/** Aperiodic fits of one run × stage × reference × averaging and method. */
export async function contrastAperiodic(db: SqlClient, q: SpectraKey, method: string): Promise<AperiodicRow[]> {
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, a.channel::VARCHAR AS channel,
            a."offset"::DOUBLE AS "offset", a.exponent::DOUBLE AS exponent, a.knee::DOUBLE AS knee
     FROM ${COHORT}.aperiodic a JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(q.runId)} AND a.stage = ${literal(q.stage)} AND a.reference = ${literal(q.reference)}
       AND a.averaging = ${literal(q.averaging)} AND a.method = ${literal(method)}
     ORDER BY r.subject, r.session NULLS FIRST, a.recording_id, a.channel, a.method`,
  );
  const subject = stringColumn(t, 'subject');
  const channel = stringColumn(t, 'channel');
  const session = t.getChild('session')!;
  const num = (name: string) => {
    const v = numberColumn(t, name);
    return (i: number) => (Number.isNaN(v[i]) ? null : v[i]);
  };
  const offset = num('offset');
  const exponent = num('exponent');
  const knee = num('knee');
  return subject.map((s, i) => ({
    subject: s,
    session: (session.get(i) as string | null) ?? null,
    channel: channel[i],
    stage: q.stage,
    offset: offset(i),
    exponent: exponent(i),
    knee: knee(i),
  }));
}

/** Fitted peaks of one run × stage × reference × averaging and method. */
export async function contrastPeaks(db: SqlClient, q: SpectraKey, method: string): Promise<PeakRow[]> {
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, p.channel::VARCHAR AS channel,
            p.center_hz::DOUBLE AS center_hz, p.height::DOUBLE AS height, p.bandwidth_hz::DOUBLE AS bandwidth_hz
     FROM ${COHORT}.peaks p JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(q.runId)} AND p.stage = ${literal(q.stage)} AND p.reference = ${literal(q.reference)}
       AND p.averaging = ${literal(q.averaging)} AND p.method = ${literal(method)}
     ORDER BY r.subject, r.session NULLS FIRST, p.recording_id, p.channel, p.center_hz`,
  );
  const subject = stringColumn(t, 'subject');
  const channel = stringColumn(t, 'channel');
  const session = t.getChild('session')!;
  const center = numberColumn(t, 'center_hz');
  const height = numberColumn(t, 'height');
  const width = numberColumn(t, 'bandwidth_hz');
  return subject.map((s, i) => ({
    subject: s,
    session: (session.get(i) as string | null) ?? null,
    channel: channel[i],
    stage: q.stage,
    centerHz: center[i],
    height: height[i],
    bandwidthHz: width[i],
  }));
}

/** What each stored channel of a run was recorded against, as its label names it (channels.reference_electrode). */
export async function contrastRecordedReferences(db: SqlClient, runId: string): Promise<RecordedReference[]> {
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, c.channel::VARCHAR AS channel, c.reference_electrode::VARCHAR AS reference_electrode
     FROM ${COHORT}.channels c JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(runId)}
     ORDER BY r.subject, r.session NULLS FIRST, c.recording_id, c.channel`,
  );
  const subject = stringColumn(t, 'subject');
  const channel = stringColumn(t, 'channel');
  const session = t.getChild('session')!;
  const reference = t.getChild('reference_electrode')!;
  return subject.map((s, i) => ({
    subject: s,
    session: (session.get(i) as string | null) ?? null,
    channel: channel[i],
    referenceElectrode: (reference.get(i) as string | null) ?? null,
  }));
}

/** The participants table as the contrast reads it: numbers for numeric columns, text otherwise. */
export async function contrastParticipants(db: SqlClient, schema: CohortSchema): Promise<ContrastData['participants']> {
  const p = await participants(db, schema);
  return p.rows.map((r) => Object.fromEntries(Object.entries(r).map(([k, v]) => [k, typeof v === 'boolean' ? String(v) : v])));
}

/**
 * Everything `contrast` needs from the database, with the exclusion list of the quality screen;
 * with maxHz the spectra only up to that frequency (contrastMaxHz: what the contrast's own
 * measure reads — not for callers that compute other measures from the same rows).
 */
export async function loadContrastData(
  db: SqlClient,
  schema: CohortSchema,
  runs: readonly RunInfo[],
  c: Contrast,
  exclusions: readonly Exclusion[],
  maxHz?: number,
): Promise<{ runId: string; data: ContrastData }> {
  const run = chooseRun(runs);
  const stages: Stage[] = c.design === 'paired' && c.stages ? [...c.stages] : [c.stage];
  const needs = measureNeeds(c.measure);
  // all queries issued together (duckdb-wasm runs them one after another in its worker, without
  // waits between); rows joined with concat, not push(...rows), which overflows the call stack
  // at cohort size (10⁵ rows)
  const [perStage, participantRows, recordedReferences] = await Promise.all([
    Promise.all(
      stages.map((stage) => {
        const q = { runId: run.runId, stage, reference: c.reference, averaging: c.averaging };
        return Promise.all([
          contrastSpectra(db, q, maxHz),
          needs.aperiodic ? contrastAperiodic(db, q, c.aperiodicMethod) : Promise.resolve([]),
          needs.peaks ? contrastPeaks(db, q, c.aperiodicMethod) : Promise.resolve([]),
        ]);
      }),
    ),
    contrastParticipants(db, schema),
    // 'recorded' spectra are pooled only when recorded against one reference (src/core/contrast/recorded-references.ts)
    c.reference === 'recorded' ? contrastRecordedReferences(db, run.runId) : Promise.resolve(undefined),
  ]);
  let axis = { freqStartHz: 0, freqStepHz: 0, nBins: 0 };
  for (const [m] of perStage) {
    if (m.nBins > 0) {
      if (axis.nBins > 0 && (axis.nBins !== m.nBins || axis.freqStepHz !== m.freqStepHz)) throw new Error('stages have different frequency axes');
      axis = { freqStartHz: m.freqStartHz, freqStepHz: m.freqStepHz, nBins: m.nBins };
    }
  }
  const rows: SpectrumRow[] = ([] as SpectrumRow[]).concat(...perStage.map(([m]) => m.rows));
  const aperiodic: AperiodicRow[] = ([] as AperiodicRow[]).concat(...perStage.map(([, a]) => a));
  const peaks: PeakRow[] = ([] as PeakRow[]).concat(...perStage.map(([, , p]) => p));
  performance.mark('bandwise:contrast-data');
  if (rows.length === 0) throw new Error(`no ${stages.join('/')} spectra with reference ${c.reference} and averaging ${c.averaging} in run ${run.runId}`);
  return {
    runId: run.runId,
    data: { spectra: { ...axis, rows }, aperiodic, peaks, participants: participantRows, exclusions: [...exclusions], recordedReferences },
  };
}
