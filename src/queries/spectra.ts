// Named queries over the stored spectra (FLOAT[] power lists, µV²/Hz).
import type { SpectrumRow } from '../core/contrast/data.ts';
import type { Stage } from '../core/stages.ts';
import { COHORT, column, literal, numbers, texts, textsOrNull, type SqlClient } from './client.ts';
import { estimatorCondition } from './estimator.ts';

/** One run × stage × reference × averaging (× estimator). */
export interface SpectraKey {
  runId: string;
  stage: Stage;
  reference: string;
  averaging: string;
  /** spectral estimator (default welch; null: a database without the column, all Welch — estimator.ts) */
  estimator?: string | null;
  /** Only these channels (default all). */
  channels?: readonly string[];
}

/** Below this many stored values (4 MB) the power lists come in one result, not a stream (which costs a connection and several round trips to duckdb-wasm's engine). */
const STREAM_MIN_VALUES = 1 << 20;

/** The rows of one frequency axis, each with its own view into one Float32Array of power. */
export interface SpectraRows {
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  rows: SpectrumRow[];
}

/**
 * Stored spectra of one run × stage × reference × averaging, ordered by subject, session, recording,
 * channel; with maxHz, each list only up to that frequency (the axis start unchanged). Two reads:
 * the keys in that order (small), then the power lists in storage order, each copied into its
 * row's place of one Float32Array — streamed as they arrive when there are many, so the engine
 * never sorts (nor holds) the lists and the reader never holds them twice.
 */
export async function spectraRows(db: SqlClient, q: SpectraKey, maxHz?: number): Promise<SpectraRows> {
  // Channels of one recording can have different lengths (each is stored up to its own Nyquist
  // frequency, so a 20-Hz EMG stops at 10 Hz beside 0–45-Hz EEG): a row shorter than the longest
  // of its recording's requested channels is left out, as a channel that does not reach the
  // recording's frequency range. `cell` names columns only spectra has, so it reads the same
  // inside and outside the join.
  const only = q.channels ? ` AND channel IN (${q.channels.length ? q.channels.map(literal).join(', ') : 'NULL'})` : '';
  const cell = `stage = ${literal(q.stage)} AND reference = ${literal(q.reference)} AND averaging = ${literal(q.averaging)}${estimatorCondition('estimator', q.estimator)}${only}`;
  const from = `FROM ${COHORT}.spectra s JOIN ${COHORT}.recordings r USING (recording_id)
       JOIN (SELECT recording_id, max(n_bins) AS longest FROM ${COHORT}.spectra WHERE ${cell} GROUP BY recording_id) m USING (recording_id)
     WHERE r.run_id = ${literal(q.runId)} AND ${cell} AND s.n_bins = m.longest`;
  // the keys, with the count that decides how the lists are read
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, s.recording_id::VARCHAR AS recording_id,
            s.channel::VARCHAR AS channel, s.n_epochs::DOUBLE AS n_epochs, s.flagged AS flagged, s.flag_reason::VARCHAR AS flag_reason,
            s.freq_start_hz::DOUBLE AS f0, s.freq_step_hz::DOUBLE AS df, s.n_bins::DOUBLE AS n_bins
     ${from}
     ORDER BY r.subject, r.session NULLS FIRST, s.recording_id, s.channel`,
  );
  performance.mark('bandwise:spectra-keys');
  const n = t.rowCount;
  if (n === 0) return { freqStartHz: 0, freqStepHz: 0, nBins: 0, rows: [] };
  const f0 = numbers(t, 'f0');
  const df = numbers(t, 'df');
  const nb = numbers(t, 'n_bins');
  for (let i = 1; i < n; i++) {
    if (f0[i] !== f0[0] || df[i] !== df[0] || nb[i] !== nb[0]) {
      throw new Error(
        `spectra of ${q.stage}/${q.reference}/${q.averaging}: row ${i} has frequency axis ${f0[i]} + k·${df[i]} Hz × ${nb[i]}, the first ${f0[0]} + k·${df[0]} Hz × ${nb[0]}`,
      );
    }
  }
  const nBins = Math.min(nb[0], maxHz === undefined ? nb[0] : binsUpTo(f0[0], df[0], maxHz));
  // the first nBins of each list (list_slice counts from 1, end included)
  const powerSql = `SELECT s.recording_id::VARCHAR AS recording_id, s.channel::VARCHAR AS channel,
                           ${nBins < nb[0] ? `list_slice(s.power, 1, ${nBins})` : 's.power'} AS power ${from}`;
  const subject = texts(t, 'subject');
  const recording = texts(t, 'recording_id');
  const channel = texts(t, 'channel');
  const place = new Map<string, number>();
  for (let i = 0; i < n; i++) place.set(`${recording[i]}\u0000${channel[i]}`, i);
  const power = new Float32Array(n * nBins);
  let copied = 0;
  for await (const batch of db.listBatches(powerSql, 'power', nBins, { stream: n * nBins >= STREAM_MIN_VALUES })) {
    const rec = column(batch, 'recording_id');
    const ch = column(batch, 'channel');
    for (let i = 0; i < batch.rowCount; i++) {
      const at = place.get(`${rec[i]}\u0000${ch[i]}`);
      if (at === undefined)
        throw new Error(`spectra of ${q.stage}/${q.reference}/${q.averaging}: the power read has a row (${rec[i]}, ${ch[i]}) the keys read has not`);
      power.set(batch.values.subarray(i * nBins, (i + 1) * nBins), at * nBins);
    }
    copied += batch.rowCount;
  }
  if (copied !== n) throw new Error(`spectra of ${q.stage}/${q.reference}/${q.averaging}: ${n} keys but ${copied} power lists`);
  const session = textsOrNull(t, 'session');
  const nEpochs = numbers(t, 'n_epochs');
  const flagged = column(t, 'flagged');
  const reason = textsOrNull(t, 'flag_reason');
  const rows: SpectrumRow[] = new Array(n);
  for (let i = 0; i < n; i++) {
    rows[i] = {
      subject: subject[i],
      session: session[i],
      channel: channel[i],
      stage: q.stage,
      nEpochs: nEpochs[i],
      flagged: flagged[i] === true,
      flagReason: reason[i],
      power: power.subarray(i * nBins, (i + 1) * nBins),
    };
  }
  return { freqStartHz: f0[0], freqStepHz: df[0], nBins, rows };
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

/** Spectra of one channel × stage × reference × averaging (Welch unless told) across the cohort (every run), one row per recording. */
export interface ChannelSpectra {
  recordingIds: string[];
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  /** recordings × nBins, µV²/Hz */
  power: Float32Array;
}

export async function channelSpectra(
  db: SqlClient,
  sel: { channel: string; stage: string; reference: string; averaging: string; estimator?: string | null },
): Promise<ChannelSpectra> {
  const where = `channel = ${literal(sel.channel)} AND stage = ${literal(sel.stage)} AND reference = ${literal(sel.reference)} AND averaging = ${literal(sel.averaging)}${estimatorCondition('estimator', sel.estimator)}`;
  const t = await db.query(
    `SELECT recording_id::VARCHAR AS recording_id, freq_start_hz::DOUBLE AS f0, freq_step_hz::DOUBLE AS df, n_bins::DOUBLE AS n_bins
     FROM ${COHORT}.spectra WHERE ${where} ORDER BY recording_id`,
  );
  const n = t.rowCount;
  const nb = numbers(t, 'n_bins');
  const f0 = numbers(t, 'f0');
  const df = numbers(t, 'df');
  for (let i = 1; i < n; i++) {
    if (nb[i] !== nb[0] || f0[i] !== f0[0] || df[i] !== df[0])
      throw new Error(`spectra of ${sel.channel} ${sel.stage}: recordings have different frequency axes`);
  }
  const recordingIds = texts(t, 'recording_id');
  const nBins = n > 0 ? nb[0] : 0;
  const power = new Float32Array(n * nBins);
  if (n > 0) {
    let row = 0;
    const lists = db.listBatches(`SELECT power FROM ${COHORT}.spectra WHERE ${where} ORDER BY recording_id`, 'power', nBins, { stream: false });
    for await (const batch of lists) {
      power.set(batch.values, row * nBins);
      row += batch.rowCount;
    }
    if (row !== n) throw new Error(`spectra of ${sel.channel} ${sel.stage}: ${n} recordings but ${row} power lists`);
  }
  return { recordingIds, freqStartHz: n > 0 ? f0[0] : 0, freqStepHz: n > 0 ? df[0] : 0, nBins, power };
}

/** The references a run stored spectra for, sorted. */
export async function storedReferences(db: SqlClient, runId: string): Promise<string[]> {
  const r = await db.query(
    `SELECT DISTINCT s.reference::VARCHAR AS reference FROM ${COHORT}.spectra s JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(runId)} ORDER BY reference`,
  );
  return texts(r, 'reference');
}
