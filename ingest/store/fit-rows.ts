/** The aperiodic and peaks rows of one recording (stage fits of each estimator), appended inside its write transaction (writer.ts). */
import type { DuckDBConnection } from '@duckdb/node-api';
import type { RecordingBundle } from './bundle.ts';
import { appendColumns } from './chunks.ts';
import { tableDef } from './schema.ts';

export async function appendFitRows(c: DuckDBConnection, recordingId: string, ap: RecordingBundle['aperiodic'], pk: RecordingBundle['peaks']): Promise<void> {
  await appendColumns(c, tableDef('aperiodic'), ap.length, {
    recording_id: () => recordingId,
    channel: (i) => ap[i].channel,
    stage: (i) => ap[i].stage,
    reference: (i) => ap[i].reference,
    averaging: (i) => ap[i].averaging,
    estimator: (i) => ap[i].estimator ?? 'welch',
    method: (i) => ap[i].method,
    fit_lo_hz: (i) => ap[i].fitLoHz,
    fit_hi_hz: (i) => ap[i].fitHiHz,
    offset: (i) => ap[i].offset,
    exponent: (i) => ap[i].exponent,
    knee: (i) => ap[i].knee,
    r2: (i) => ap[i].r2,
    rmse: (i) => ap[i].rmse,
    n_peaks: (i) => ap[i].nPeaks,
  });

  await appendColumns(c, tableDef('peaks'), pk.length, {
    recording_id: () => recordingId,
    channel: (i) => pk[i].channel,
    stage: (i) => pk[i].stage,
    reference: (i) => pk[i].reference,
    averaging: (i) => pk[i].averaging,
    estimator: (i) => pk[i].estimator ?? 'welch',
    method: (i) => pk[i].method,
    center_hz: (i) => pk[i].centerHz,
    height: (i) => pk[i].height,
    bandwidth_hz: (i) => pk[i].bandwidthHz,
  });
}
