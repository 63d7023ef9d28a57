// The named query of a recording's whole night: each epoch's stored spectrum of one channel
// (epoch_spectra, written by `bandwise ingest --epoch-spectra`), decoded to log10 power.
import { dequantiseLog10 } from '../core/spectrum/log-quantise.ts';
import { COHORT, column, literal, numbers, type SqlClient } from './client.ts';
import type { CohortSchema } from './schema.ts';

/** Each stored epoch spectrum of one recording × channel (recorded reference), epochs in order. */
export interface NightSpectra {
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  /** epochs.epoch of each row, ascending (epochs without data have no row) */
  epochs: number[];
  /** rows × nBins, log10 of power in µV²/Hz, row r at [r·nBins, (r+1)·nBins) */
  log10Power: Float64Array;
  /** per row: half its quantisation step, the most a decoded value differs from the full-precision log10 power */
  maxErrorLog10: Float64Array;
}

/**
 * The night of one recording × channel from epoch_spectra, decoded with dequantiseLog10
 * (src/core/spectrum/log-quantise.ts); null when the database or this channel holds none.
 */
export async function nightSpectra(db: SqlClient, schema: CohortSchema, recordingId: string, channel: string): Promise<NightSpectra | null> {
  if (!schema.has('epoch_spectra', 'recording_id', 'channel', 'epoch', 'levels')) return null;
  const where = `recording_id = ${literal(recordingId)} AND channel = ${literal(channel)} AND reference = 'recorded'`;
  const axes = await db.query(
    `SELECT DISTINCT freq_start_hz::DOUBLE AS f0, freq_step_hz::DOUBLE AS df, n_bins::DOUBLE AS n_bins FROM ${COHORT}.epoch_spectra WHERE ${where}`,
  );
  if (axes.rowCount === 0) return null;
  if (axes.rowCount > 1) throw new Error(`epoch spectra of ${channel}: ${axes.rowCount} different frequency axes in one recording`);
  const [f0] = numbers(axes, 'f0');
  const [df] = numbers(axes, 'df');
  const [nBins] = numbers(axes, 'n_bins');
  const epochs: number[] = [];
  const lo: number[] = [];
  const step: number[] = [];
  const levels: Float32Array[] = [];
  // the levels (0 … 65535) read as FLOAT[]: every 16-bit integer is exact in a 32-bit float
  const sql = `SELECT epoch::DOUBLE AS epoch, log10_min::DOUBLE AS lo, log10_step::DOUBLE AS step, levels::FLOAT[] AS levels
               FROM ${COHORT}.epoch_spectra WHERE ${where} ORDER BY epoch`;
  for await (const batch of db.listBatches(sql, 'levels', nBins, { stream: false })) {
    const e = column(batch, 'epoch');
    const l = column(batch, 'lo');
    const s = column(batch, 'step');
    for (let i = 0; i < batch.rowCount; i++) {
      epochs.push(Number(e[i]));
      lo.push(Number(l[i]));
      step.push(Number(s[i]));
    }
    levels.push(batch.values);
  }
  const log10Power = new Float64Array(epochs.length * nBins);
  const maxErrorLog10 = new Float64Array(epochs.length);
  let r = 0;
  for (const values of levels) {
    for (let at = 0; at < values.length; at += nBins, r++) {
      for (let b = 0; b < nBins; b++) log10Power[r * nBins + b] = dequantiseLog10(lo[r], step[r], values[at + b]);
      maxErrorLog10[r] = step[r] / 2;
    }
  }
  return { freqStartHz: f0, freqStepHz: df, nBins, epochs, log10Power, maxErrorLog10 };
}
