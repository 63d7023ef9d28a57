// Everything the quality screen shows: the subjects × channels grid from the quality table
// (cell score from src/core/quality/cell-score.ts), the flags, and one cell's detail.
import { frontToBack, storedPositionOf } from '../../../core/montage/channel-order.ts';
import { cellScore } from '../../../core/quality/cell-score.ts';
import type { QualityMetric, QualityRow } from '../../../core/quality/row.ts';
import type { Stage } from '../../../core/stages.ts';
import type { Row, SqlClient } from '../../../queries/client.ts';
import { channelList, epochBandPower, qualityRows, recordingEpochs, recordingSubjects, type EpochRow, type QualityRecord } from '../../../queries/quality.ts';
import type { CohortSchema } from '../../../queries/schema.ts';
import { channelSpectra } from '../../../queries/spectra.ts';
import { storedEstimator } from '../../../queries/estimator.ts';
import { spectrumQuartiles, type SpectrumQuartiles } from './cohort-band.ts';

/** Column of the grid for metrics that are not per channel. */
export const RECORDING_COLUMN = '(recording)';

export interface GridCell {
  recordingId: string;
  subject: string;
  channel: string;
  /** combined score 0–2 (cell-score.ts) */
  score: number;
  nFlagged: number;
  worst: string | null;
  reasons: string[];
  /** per metric: the value of the row with the highest severity, and that severity */
  metrics: Record<string, { value: number | null; severity: number }>;
}

export interface QualityData {
  recordings: { recordingId: string; subject: string; session: string | null }[];
  /** channels front to back, then left to right (stored positions, else the 10-10 template) */
  channelOrder: string[];
  /** stages that have quality rows */
  stages: string[];
  channels: string[];
  metrics: string[];
  cells: GridCell[];
  /** flagged rows, worst first */
  flags: Row[];
  rows: QualityRecord[];
}

function asCoreRow(r: QualityRecord): QualityRow {
  return {
    channel: r.channel,
    stage: r.stage as Stage | null,
    metric: r.metric as QualityMetric,
    value: r.value,
    flagged: r.flagged,
    reason: r.reason,
    severity: r.severity,
  };
}

export function buildGrid(
  recordings: QualityData['recordings'],
  channelOrder: readonly string[],
  rows: readonly QualityRecord[],
): Pick<QualityData, 'channels' | 'metrics' | 'cells'> {
  const byCell = new Map<string, QualityRecord[]>();
  for (const r of rows) {
    const k = `${r.recordingId}\u0000${r.channel ?? RECORDING_COLUMN}`;
    let list = byCell.get(k);
    if (list === undefined) byCell.set(k, (list = []));
    list.push(r);
  }
  const seen = new Set(rows.map((r) => r.channel ?? RECORDING_COLUMN));
  const channels = [...channelOrder.filter((c) => seen.has(c)), ...[...seen].filter((c) => !channelOrder.includes(c) && c !== RECORDING_COLUMN).sort()];
  if (seen.has(RECORDING_COLUMN)) channels.push(RECORDING_COLUMN);
  const metrics = [...new Set(rows.map((r) => r.metric))].sort();
  const cells: GridCell[] = [];
  for (const rec of recordings) {
    for (const channel of channels) {
      const list = byCell.get(`${rec.recordingId}\u0000${channel}`) ?? [];
      if (list.length === 0) continue;
      const s = cellScore(list.map(asCoreRow));
      const perMetric: GridCell['metrics'] = {};
      for (const r of list) {
        const m = perMetric[r.metric];
        if (m === undefined || r.severity > m.severity) perMetric[r.metric] = { value: r.value, severity: r.severity };
      }
      cells.push({
        recordingId: rec.recordingId,
        subject: rec.subject,
        channel,
        score: s.score,
        nFlagged: s.nFlagged,
        worst: s.worst,
        reasons: s.reasons,
        metrics: perMetric,
      });
    }
  }
  return { channels, metrics, cells };
}

/** The stage the grid opens on: N2 when stored (the stage spectral analyses use most), else the first stored, else 'all'. */
export function defaultGridStage(stages: readonly string[]): string {
  return stages.includes('N2') ? 'N2' : (stages[0] ?? 'all');
}

/** The grid of one stage: its rows and the rows that are not per stage ('all': every row). */
export function gridForStage(d: QualityData, stage: string): Pick<QualityData, 'channels' | 'metrics' | 'cells'> {
  if (stage === 'all') return { channels: d.channels, metrics: d.metrics, cells: d.cells };
  return buildGrid(
    d.recordings,
    d.channelOrder,
    d.rows.filter((r) => r.stage === null || r.stage === stage),
  );
}

export async function loadQuality(db: SqlClient, schema: CohortSchema): Promise<QualityData> {
  const recordings = await recordingSubjects(db);
  const rows = await qualityRows(db, schema);
  // front to back, then left to right, by the stored positions (src/core/montage/channel-order.ts)
  const stored = await channelList(db);
  const channelOrder = frontToBack(
    stored.map((c) => c.channel),
    storedPositionOf(stored.flatMap((c) => (c.x !== null && c.y !== null && c.z !== null ? [{ channel: c.channel, x: c.x, y: c.y, z: c.z }] : []))),
  );
  const grid = buildGrid(recordings, channelOrder, rows);
  const flags: Row[] = rows
    .filter((r) => r.flagged)
    .sort((a, b) => b.severity - a.severity || a.subject.localeCompare(b.subject))
    .map((r) => ({
      subject: r.subject,
      recording_id: r.recordingId,
      channel: r.channel ?? RECORDING_COLUMN,
      stage: r.stage,
      metric: r.metric,
      value: r.value,
      severity: r.severity,
      reason: r.reason,
    }));
  const stages = [...new Set(rows.map((r) => r.stage).filter((s): s is string => s !== null))];
  return { recordings, channelOrder, stages, ...grid, flags, rows };
}

export interface CellDetail {
  recordingId: string;
  subject: string;
  channel: string;
  stage: string;
  reference: string;
  /** this recording's spectrum, µV²/Hz, and the cohort's quartiles for the same channel and stage */
  spectrum: Float32Array | null;
  cohort: SpectrumQuartiles | null;
  nCohort: number;
  epochs: EpochRow[];
  bandPower: Row[];
  /** rejected epochs per reason; fraction of all the recording's epochs rejected for this channel */
  rejections: Row[];
  rejectedFraction: number;
}

export async function loadCellDetail(
  db: SqlClient,
  schema: CohortSchema,
  sel: { recordingId: string; subject: string; channel: string; stage: string; reference: string; averaging: string },
): Promise<CellDetail> {
  const isChannel = sel.channel !== RECORDING_COLUMN;
  // the quality screen reads Welch spectra, as its metrics were computed on them
  const all = isChannel ? await channelSpectra(db, { ...sel, estimator: storedEstimator(schema, 'welch') }) : null;
  const i = all ? all.recordingIds.indexOf(sel.recordingId) : -1;
  const spectrum = all && i >= 0 ? all.power.slice(i * all.nBins, (i + 1) * all.nBins) : null;
  const cohort = all && all.recordingIds.length > 0 ? spectrumQuartiles(all.power, all.nBins, all.freqStartHz, all.freqStepHz) : null;
  const epochs = isChannel ? await recordingEpochs(db, sel.recordingId, sel.channel) : [];
  const bandPower = isChannel ? await epochBandPower(db, schema, sel.recordingId, sel.channel, sel.reference) : [];
  const counts = new Map<string, number>();
  let rejected = 0;
  for (const e of epochs) {
    if (e.reasons === '') continue;
    rejected++;
    for (const reason of e.reasons.split(', ')) counts.set(reason, (counts.get(reason) ?? 0) + 1);
  }
  return {
    ...sel,
    spectrum,
    cohort,
    nCohort: all?.recordingIds.length ?? 0,
    epochs,
    bandPower,
    rejections: [...counts].map(([reason, n]) => ({ reason, epochs: n, percent: epochs.length > 0 ? (100 * n) / epochs.length : null })),
    rejectedFraction: epochs.length > 0 ? rejected / epochs.length : 0,
  };
}
