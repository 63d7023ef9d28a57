/** The epoch_spectra rows of one recording (ingest --epoch-spectra), appended inside its write transaction (writer.ts). */
import type { DuckDBConnection } from '@duckdb/node-api';
import type { EpochSpectraBlock } from './bundle.ts';
import { appendColumns } from './chunks.ts';
import { StoreError } from './errors.ts';
import { tableDef } from './schema.ts';

/** One row per epoch of each block: its 16-bit levels and the row's log10 lo and step. */
export async function appendEpochSpectra(c: DuckDBConnection, recordingId: string, blocks: readonly EpochSpectraBlock[]): Promise<void> {
  for (const es of blocks) {
    const n = es.epoch.length;
    if (es.log10Min.length !== n || es.log10Step.length !== n || es.levels.length !== n * es.nBins) {
      throw new StoreError(`epoch spectra of ${es.channel}: columns differ in length (epochs ${n}, levels ${es.levels.length} for ${es.nBins} bins a row)`, {
        table: 'epoch_spectra',
      });
    }
    await appendColumns(c, tableDef('epoch_spectra'), n, {
      recording_id: () => recordingId,
      channel: () => es.channel,
      reference: () => es.reference,
      epoch: (i) => es.epoch[i],
      freq_start_hz: () => es.freqStartHz,
      freq_step_hz: () => es.freqStepHz,
      n_bins: () => es.nBins,
      log10_min: (i) => es.log10Min[i],
      log10_step: (i) => es.log10Step[i],
      levels: (i) => es.levels.subarray(i * es.nBins, (i + 1) * es.nBins),
    });
  }
}
