// Named queries of the quality screen: quality rows, recordings and channels of the grid, the
// stored combinations of spectra, epochs with their rejections, band power per epoch (one
// channel's spectra across the cohort: spectra.ts channelSpectra).
import { COHORT, literal, rowsOf, texts, textsOrNull, type Row, type SqlClient } from './client.ts';
import type { CohortSchema } from './schema.ts';

/** One quality row with the recording's subject (quality table, DESIGN.md). */
export interface QualityRecord {
  recordingId: string;
  subject: string;
  /** null: a recording-level metric */
  channel: string | null;
  stage: string | null;
  metric: string;
  value: number | null;
  flagged: boolean;
  reason: string | null;
  /** 0 clean, ≥ 1 flagged (src/core/quality/row.ts); 1 or 0 from `flagged` when the column is absent */
  severity: number;
  reference: string | null;
}

export async function qualityRows(db: SqlClient, schema: CohortSchema): Promise<QualityRecord[]> {
  if (!schema.has('quality', 'recording_id', 'metric', 'flagged')) return [];
  const severity = schema.has('quality', 'severity') ? 'q.severity::DOUBLE' : 'CASE WHEN q.flagged THEN 1 ELSE 0 END::DOUBLE';
  const reference = schema.has('quality', 'reference') ? 'q.reference::VARCHAR' : 'NULL::VARCHAR';
  const rows = rowsOf(
    await db.query(
      `SELECT q.recording_id::VARCHAR AS recording_id, r.subject::VARCHAR AS subject, q.channel::VARCHAR AS channel,
              q.stage::VARCHAR AS stage, q.metric::VARCHAR AS metric, q.value::DOUBLE AS value, q.flagged AS flagged,
              q.reason::VARCHAR AS reason, ${severity} AS severity, ${reference} AS reference
       FROM ${COHORT}.quality q JOIN ${COHORT}.recordings r USING (recording_id)
       ORDER BY r.subject, q.recording_id, q.channel NULLS FIRST, q.stage NULLS FIRST, q.metric, ${reference} NULLS FIRST`,
    ),
  );
  return rows.map((r) => ({
    recordingId: String(r.recording_id),
    subject: String(r.subject),
    channel: r.channel === null ? null : String(r.channel),
    stage: r.stage === null ? null : String(r.stage),
    metric: String(r.metric),
    value: typeof r.value === 'number' && Number.isFinite(r.value) ? r.value : null,
    flagged: r.flagged === true,
    reason: r.reason === null ? null : String(r.reason),
    severity: typeof r.severity === 'number' && Number.isFinite(r.severity) ? r.severity : r.flagged === true ? 1 : 0,
    reference: r.reference === null ? null : String(r.reference),
  }));
}

/** Recordings with subject, in subject order (the rows of the quality grid). */
export async function recordingSubjects(db: SqlClient): Promise<{ recordingId: string; subject: string; session: string | null }[]> {
  const t = await db.query(
    `SELECT recording_id::VARCHAR AS recording_id, subject::VARCHAR AS subject, session::VARCHAR AS session
     FROM ${COHORT}.recordings ORDER BY subject, session NULLS FIRST, recording_id`,
  );
  const subjects = texts(t, 'subject');
  const session = textsOrNull(t, 'session');
  return texts(t, 'recording_id').map((id, i) => ({ recordingId: id, subject: subjects[i], session: session[i] }));
}

/** Stored channel names with their 10-10 positions (first recording that has them). */
export async function channelList(db: SqlClient): Promise<{ channel: string; x: number | null; y: number | null; z: number | null }[]> {
  const rows = rowsOf(
    await db.query(
      `SELECT channel::VARCHAR AS channel, any_value(x)::DOUBLE AS x, any_value(y)::DOUBLE AS y, any_value(z)::DOUBLE AS z,
              min(rowid_order) AS o
       FROM (SELECT channel, x, y, z, row_number() OVER () AS rowid_order FROM ${COHORT}.channels WHERE type = 'EEG')
       GROUP BY channel ORDER BY o`,
    ),
  );
  const num = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : null);
  return rows.map((r) => ({ channel: String(r.channel), x: num(r.x), y: num(r.y), z: num(r.z) }));
}

/** Which stage × reference × averaging combinations the spectra table holds, with row counts. */
export async function spectraChoices(db: SqlClient): Promise<{ stage: string; reference: string; averaging: string; rows: number }[]> {
  const rows = rowsOf(
    await db.query(
      `SELECT stage::VARCHAR AS stage, reference::VARCHAR AS reference, averaging::VARCHAR AS averaging, count(*)::DOUBLE AS n
       FROM ${COHORT}.spectra GROUP BY ALL ORDER BY ALL`,
    ),
  );
  return rows.map((r) => ({ stage: String(r.stage), reference: String(r.reference), averaging: String(r.averaging), rows: Number(r.n) }));
}

/** Epochs of a recording with their stage; `rejected` counts the channel's rejections of that epoch. */
export interface EpochRow {
  epoch: number;
  onsetS: number;
  stage: string;
  /** rejection reasons of this channel in this epoch, '' when clean */
  reasons: string;
}

export async function recordingEpochs(db: SqlClient, recordingId: string, channel: string): Promise<EpochRow[]> {
  const rows = rowsOf(
    await db.query(
      `SELECT e.epoch::DOUBLE AS epoch, e.onset_s::DOUBLE AS onset_s, e.stage::VARCHAR AS stage,
              coalesce(string_agg(DISTINCT x.reason, ', ' ORDER BY x.reason), '') AS reasons
       FROM ${COHORT}.epochs e
       LEFT JOIN ${COHORT}.epoch_rejections x ON x.recording_id = e.recording_id AND x.epoch = e.epoch AND x.channel = ${literal(channel)} AND x.reference = 'recorded'
       WHERE e.recording_id = ${literal(recordingId)}
       GROUP BY e.epoch, e.onset_s, e.stage ORDER BY e.epoch`,
    ),
  );
  return rows.map((r) => ({ epoch: Number(r.epoch), onsetS: Number(r.onset_s), stage: String(r.stage), reasons: String(r.reasons) }));
}

/** Band power per epoch of one recording × channel × reference (epoch_band_power). */
export async function epochBandPower(db: SqlClient, schema: CohortSchema, recordingId: string, channel: string, reference: string): Promise<Row[]> {
  if (!schema.has('epoch_band_power', 'recording_id', 'band', 'power')) return [];
  const ref = schema.has('epoch_band_power', 'reference') ? `AND reference = ${literal(reference)}` : '';
  return rowsOf(
    await db.query(
      `SELECT epoch::DOUBLE AS epoch, band::VARCHAR AS band, power::DOUBLE AS power
       FROM ${COHORT}.epoch_band_power
       WHERE recording_id = ${literal(recordingId)} AND channel = ${literal(channel)} ${ref}
       ORDER BY band, epoch`,
    ),
  );
}
