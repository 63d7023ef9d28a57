/**
 * Named read queries the command line needs (bandwise compare, band-check, report).
 * Spectra come back as one Float32Array matrix (row-major, rows × n_bins) with the row keys
 * beside it, ready for src/core/stats.
 */
import type { DuckDBListVector, DuckDBValue } from '@duckdb/node-api';
import type { Averaging, Reference } from '../../ingest/store/bundle.ts';
import { StoreError } from '../../ingest/store/errors.ts';
import type { Store } from '../../ingest/store/writer.ts';
import type { Stage } from '../core/stages.ts';

export interface RunInfo {
  runId: string;
  toolVersion: string;
  parameters: unknown;
  startedAt: Date;
  finishedAt: Date | null;
  shard: string | null;
}

export interface RecordingSummary {
  recordingId: string;
  subject: string;
  session: string | null;
  fileName: string;
  fileSha256: string;
  durationS: number;
  status: string;
}

export interface SpectraQuery {
  runId: string;
  stage: Stage;
  reference: Reference;
  averaging: Averaging;
  /** Only these channels (default: all). */
  channels?: readonly string[];
}

/** Spectra of one (run, stage, reference, averaging), ordered by subject, session, channel. */
export interface SpectraMatrix {
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  recordingIds: string[];
  subjects: string[];
  sessions: (string | null)[];
  channels: string[];
  nEpochs: Int32Array;
  /** 1 where the spectrum is flagged (see flagReasons). */
  flagged: Uint8Array;
  flagReasons: (string | null)[];
  /** PSD in µV²/Hz, row r at [r·nBins, (r+1)·nBins). */
  power: Float32Array;
}

export interface AperiodicInfo {
  recordingId: string;
  subject: string;
  session: string | null;
  channel: string;
  method: string;
  fitLoHz: number;
  fitHiHz: number;
  offset: number | null;
  exponent: number | null;
  knee: number | null;
  r2: number | null;
  rmse: number | null;
}

export interface ParticipantsTable {
  columns: { name: string; type: 'DOUBLE' | 'VARCHAR' }[];
  rows: (string | number | null)[][];
}

async function query(store: Store, sql: string, values: DuckDBValue[] = []): Promise<Record<string, unknown>[]> {
  return store.exclusive(async () => (await store.connection.runAndReadAll(sql, values)).getRowObjectsJS());
}

const str = (v: unknown): string => String(v);
const strOrNull = (v: unknown): string | null => (v === null || v === undefined ? null : String(v));
const numOrNull = (v: unknown): number | null => (v === null || v === undefined ? null : Number(v));

export async function listRuns(store: Store): Promise<RunInfo[]> {
  const rows = await query(store, 'SELECT * FROM runs ORDER BY started_at, run_id');
  return rows.map((r) => ({
    runId: str(r.run_id),
    toolVersion: str(r.tool_version),
    parameters: JSON.parse(str(r.parameters)),
    startedAt: r.started_at as Date,
    finishedAt: (r.finished_at as Date | null) ?? null,
    shard: strOrNull(r.shard),
  }));
}

export async function listRecordings(store: Store, runId: string): Promise<RecordingSummary[]> {
  const rows = await query(
    store,
    'SELECT * FROM recordings WHERE run_id = $1 ORDER BY subject, session NULLS FIRST, recording_id',
    [runId],
  );
  return rows.map((r) => ({
    recordingId: str(r.recording_id),
    subject: str(r.subject),
    session: strOrNull(r.session),
    fileName: str(r.file_name),
    fileSha256: str(r.file_sha256),
    durationS: Number(r.duration_s),
    status: str(r.status),
  }));
}

export async function readSpectra(store: Store, q: SpectraQuery): Promise<SpectraMatrix> {
  // Streamed chunk by chunk; the FLOAT[] lists are copied straight from DuckDB's flat child
  // vector into one Float32Array (no JS array per row: 640,000 rows × 181 values at cohort scale).
  const where = `r.run_id = $1 AND s.stage = $2 AND s.reference = $3 AND s.averaging = $4`;
  const values: DuckDBValue[] = [q.runId, q.stage, q.reference, q.averaging];
  return store.exclusive(async () => {
    const head = (await store.connection.runAndReadAll(
      `SELECT count(*) AS n, min(s.freq_start_hz) AS f0, max(s.freq_start_hz) AS f0b, min(s.freq_step_hz) AS df, max(s.freq_step_hz) AS dfb,
              min(s.n_bins) AS nb, max(s.n_bins) AS nbb
         FROM spectra s JOIN recordings r USING (recording_id) WHERE ${where}`,
      values,
    )).getRowObjectsJS()[0];
    const total = Number(head.n);
    const freqStartHz = total > 0 ? Number(head.f0) : 0;
    const freqStepHz = total > 0 ? Number(head.df) : 0;
    const nBins = total > 0 ? Number(head.nb) : 0;
    if (total > 0 && (Number(head.f0b) !== freqStartHz || Number(head.dfb) !== freqStepHz || Number(head.nbb) !== nBins)) {
      throw new StoreError(
        `spectra of ${q.stage}/${q.reference}/${q.averaging} have different frequency axes: start ${freqStartHz}–${Number(head.f0b)} Hz, ` +
          `step ${freqStepHz}–${Number(head.dfb)} Hz, ${nBins}–${Number(head.nbb)} bins`,
        { table: 'spectra' },
      );
    }
    const wanted = q.channels ? new Set(q.channels) : null;
    const out: SpectraMatrix = {
      freqStartHz, freqStepHz, nBins, recordingIds: [], subjects: [], sessions: [], channels: [],
      nEpochs: new Int32Array(total), flagged: new Uint8Array(total), flagReasons: [], power: new Float32Array(total * nBins),
    };
    const result = await store.connection.stream(
      `SELECT s.recording_id, r.subject, r.session, s.channel, s.n_epochs, s.flagged, s.flag_reason, s.power
         FROM spectra s JOIN recordings r USING (recording_id)
        WHERE ${where}
        ORDER BY r.subject, r.session NULLS FIRST, s.recording_id, s.channel`,
      values,
    );
    let row = 0;
    for (let chunk = await result.fetchChunk(); chunk && chunk.rowCount > 0; chunk = await result.fetchChunk()) {
      const [rid, subject, session, channel, nEpochs, flagged, reason] = [0, 1, 2, 3, 4, 5, 6].map((c) => chunk.getColumnVector(c));
      const list = chunk.getColumnVector(7) as DuckDBListVector;
      const child = list.childVector;
      for (let i = 0; i < chunk.rowCount; i++) {
        const ch = String(channel.getItem(i));
        if (wanted && !wanted.has(ch)) continue;
        out.recordingIds.push(String(rid.getItem(i)));
        out.subjects.push(String(subject.getItem(i)));
        out.sessions.push(strOrNull(session.getItem(i)));
        out.channels.push(ch);
        out.nEpochs[row] = Number(nEpochs.getItem(i));
        out.flagged[row] = flagged.getItem(i) ? 1 : 0;
        out.flagReasons.push(strOrNull(reason.getItem(i)));
        const offset = list.getEntryOffset(i);
        const base = row * nBins;
        for (let k = 0; k < nBins; k++) out.power[base + k] = child.getItem(offset + k) as number;
        row++;
      }
    }
    // a channel filter keeps fewer rows than counted
    out.nEpochs = out.nEpochs.subarray(0, row);
    out.flagged = out.flagged.subarray(0, row);
    out.power = out.power.subarray(0, row * nBins);
    return out;
  });
}

export async function readAperiodic(
  store: Store,
  q: Omit<SpectraQuery, 'channels'> & { method?: string },
): Promise<AperiodicInfo[]> {
  const rows = await query(
    store,
    `SELECT a.*, r.subject, r.session
       FROM aperiodic a JOIN recordings r USING (recording_id)
      WHERE r.run_id = $1 AND a.stage = $2 AND a.reference = $3 AND a.averaging = $4
        AND ($5 IS NULL OR a.method = $5)
      ORDER BY r.subject, r.session NULLS FIRST, a.recording_id, a.channel, a.method`,
    [q.runId, q.stage, q.reference, q.averaging, q.method ?? null],
  );
  return rows.map((r) => ({
    recordingId: str(r.recording_id),
    subject: str(r.subject),
    session: strOrNull(r.session),
    channel: str(r.channel),
    method: str(r.method),
    fitLoHz: Number(r.fit_lo_hz),
    fitHiHz: Number(r.fit_hi_hz),
    offset: numOrNull(r.offset),
    exponent: numOrNull(r.exponent),
    knee: numOrNull(r.knee),
    r2: numOrNull(r.r2),
    rmse: numOrNull(r.rmse),
  }));
}

/** The participants table with its column types; empty when no cohort table was written. */
export async function readParticipants(store: Store): Promise<ParticipantsTable> {
  const info = await query(
    store,
    "SELECT column_name, data_type FROM information_schema.columns WHERE table_name = 'participants' ORDER BY ordinal_position",
  );
  if (info.length === 0) return { columns: [], rows: [] };
  const columns = info.map((c) => ({ name: str(c.column_name), type: str(c.data_type) === 'DOUBLE' ? ('DOUBLE' as const) : ('VARCHAR' as const) }));
  const rows = await query(store, 'SELECT * FROM participants');
  return {
    columns,
    rows: rows.map((r) => columns.map((c) => (r[c.name] === null ? null : c.type === 'DOUBLE' ? Number(r[c.name]) : String(r[c.name])))),
  };
}

export interface PeakInfo {
  recordingId: string;
  subject: string;
  session: string | null;
  channel: string;
  method: string;
  centerHz: number;
  height: number;
  bandwidthHz: number;
}

/** Fitted peaks of one (run, stage, reference, averaging), optionally one aperiodic method. */
export async function readPeaks(store: Store, q: Omit<SpectraQuery, 'channels'> & { method?: string }): Promise<PeakInfo[]> {
  const rows = await query(
    store,
    `SELECT p.*, r.subject, r.session
       FROM peaks p JOIN recordings r USING (recording_id)
      WHERE r.run_id = $1 AND p.stage = $2 AND p.reference = $3 AND p.averaging = $4
        AND ($5 IS NULL OR p.method = $5)
      ORDER BY r.subject, r.session NULLS FIRST, p.recording_id, p.channel, p.center_hz`,
    [q.runId, q.stage, q.reference, q.averaging, q.method ?? null],
  );
  return rows.map((r) => ({
    recordingId: str(r.recording_id),
    subject: str(r.subject),
    session: strOrNull(r.session),
    channel: str(r.channel),
    method: str(r.method),
    centerHz: Number(r.center_hz),
    height: Number(r.height),
    bandwidthHz: Number(r.bandwidth_hz),
  }));
}

/** What each stored channel of a run was recorded against, as its label names it (channels.reference_electrode). */
export async function readRecordedReferences(store: Store, runId: string): Promise<{ subject: string; session: string | null; channel: string; referenceElectrode: string | null }[]> {
  const rows = await query(
    store,
    `SELECT r.subject, r.session, c.channel, c.reference_electrode
       FROM channels c JOIN recordings r USING (recording_id)
      WHERE r.run_id = $1
      ORDER BY r.subject, r.session NULLS FIRST, c.recording_id, c.channel`,
    [runId],
  );
  return rows.map((r) => ({ subject: str(r.subject), session: strOrNull(r.session), channel: str(r.channel), referenceElectrode: strOrNull(r.reference_electrode) }));
}

/** The stages with spectra of this reference and averaging in a run, sorted. */
export async function readStoredStages(store: Store, q: { runId: string; reference: string; averaging: string }): Promise<string[]> {
  const rows = await query(store, 'SELECT DISTINCT s.stage FROM spectra s JOIN recordings r USING (recording_id) WHERE r.run_id = $1 AND s.reference = $2 AND s.averaging = $3 ORDER BY s.stage', [q.runId, q.reference, q.averaging]);
  return rows.map((r) => String(r.stage));
}
