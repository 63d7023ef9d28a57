/**
 * Store write throughput, columnar data chunks of 2048 rows: spectra rows of 181 floats and
 * epoch band-power rows through Store.writeRecording (one transaction and commit per
 * recording), the fixed cost of one recording's transaction (a bundle without spectra and band
 * powers), and side by side in the same run the same spectra appended (a) in chunks inside one
 * transaction and (b) row by row (appender.appendList per row) inside one transaction, for the
 * ratio.
 * Sizes: 8 recordings × 19 channels × 5 stages × 5 references × 2 averagings = 7,600 spectra;
 * 4 recordings × 19 channels × 960 epochs (8 h) × 6 bands = 437,760 band-power rows.
 */
import { join } from 'node:path';
import { listValue, FLOAT, LIST } from '@duckdb/node-api';
import { openStore } from '../../ingest/store/database.ts';
import { appendColumns } from '../../ingest/store/chunks.ts';
import { tableDef } from '../../ingest/store/schema.ts';
import type { RecordingBundle } from '../../ingest/store/bundle.ts';
import { makeBundle, type BundleSize } from '../store/make-bundle.ts';
import { tempDir } from '../store/helpers.ts';

const SPECTRA_SIZE: BundleSize = {
  channels: 19,
  stages: ['W', 'N1', 'N2', 'N3', 'R'],
  references: ['recorded', 'linked-mastoids', 'contralateral-mastoid', 'average', 'bipolar'],
  nBins: 181,
  epochs: 1,
  bands: ['delta'],
};
const BAND_SIZE: BundleSize = {
  channels: 19,
  stages: ['N2'],
  references: ['recorded'],
  nBins: 181,
  epochs: 960,
  bands: ['so', 'delta', 'theta', 'alpha', 'sigma', 'beta'],
};

function onlySpectra(b: RecordingBundle): RecordingBundle {
  return { ...b, bandPowers: [] };
}
function onlyBandPowers(b: RecordingBundle): RecordingBundle {
  return { ...b, spectra: [] };
}

export async function run(): Promise<Record<string, unknown>> {
  const { dir, cleanup } = tempDir();
  try {
    const store = await openStore(join(dir, 'bench.duckdb'), { create: true });
    const { runId } = await store.beginRun('bench', { bench: 'store-write' });

    const spectraBundles = Array.from({ length: 8 }, (_, i) => onlySpectra(makeBundle(runId, 100 + i, SPECTRA_SIZE)));
    const nSpectra = spectraBundles.reduce((s, b) => s + b.spectra.length, 0);
    let t = performance.now();
    for (const b of spectraBundles) await store.writeRecording(b);
    const spectraS = (performance.now() - t) / 1000;

    const bandBundles = Array.from({ length: 4 }, (_, i) => onlyBandPowers(makeBundle(runId, 200 + i, BAND_SIZE)));
    const nBand = bandBundles.reduce((s, b) => s + b.bandPowers[0].power.length, 0);
    t = performance.now();
    for (const b of bandBundles) await store.writeRecording(b);
    const bandS = (performance.now() - t) / 1000;

    const emptyBundles = Array.from({ length: 8 }, (_, i) => ({ ...makeBundle(runId, 300 + i), spectra: [], bandPowers: [] }));
    t = performance.now();
    for (const b of emptyBundles) await store.writeRecording(b);
    const fixedMsPerRecording = (performance.now() - t) / emptyBundles.length;

    // Chunks vs row by row, both in one transaction, same spectra, scratch tables of the same value columns.
    const rowwise = spectraBundles.slice(0, 2).flatMap((b) => b.spectra);
    const c = store.connection;
    await c.run('CREATE TABLE scratch_chunks (channel VARCHAR, stage VARCHAR, reference VARCHAR, averaging VARCHAR, power FLOAT[])');
    const scratch = {
      name: 'scratch_chunks',
      doc: '',
      columns: tableDef('spectra').columns.filter((col) => ['channel', 'stage', 'reference', 'averaging', 'power'].includes(col.name)),
    };
    t = performance.now();
    await c.run('BEGIN TRANSACTION');
    await appendColumns(c, scratch, rowwise.length, {
      channel: (i) => rowwise[i].channel,
      stage: (i) => rowwise[i].stage,
      reference: (i) => rowwise[i].reference,
      averaging: (i) => rowwise[i].averaging,
      power: (i) => rowwise[i].power,
    });
    await c.run('COMMIT');
    const chunkS = (performance.now() - t) / 1000;

    await c.run('CREATE TABLE scratch_rows (channel VARCHAR, stage VARCHAR, reference VARCHAR, averaging VARCHAR, power FLOAT[])');
    const listType = LIST(FLOAT);
    t = performance.now();
    await c.run('BEGIN TRANSACTION');
    const appender = await c.createAppender('scratch_rows');
    for (const s of rowwise) {
      appender.appendVarchar(s.channel);
      appender.appendVarchar(s.stage);
      appender.appendVarchar(s.reference);
      appender.appendVarchar(s.averaging);
      appender.appendList(listValue(Array.from(s.power)), listType);
      appender.endRow();
    }
    appender.flushSync();
    appender.closeSync();
    await c.run('COMMIT');
    const rowwiseS = (performance.now() - t) / 1000;
    await store.close();

    const chunkRowsPerS = rowwise.length / chunkS;
    const rowwiseRowsPerS = rowwise.length / rowwiseS;
    return {
      spectraRows: nSpectra,
      spectraBins: 181,
      writeRecordingSpectraRowsPerS: Math.round(nSpectra / spectraS),
      bandPowerRows: nBand,
      writeRecordingBandPowerRowsPerS: Math.round(nBand / bandS),
      fixedMsPerRecording: Number(fixedMsPerRecording.toFixed(1)),
      oneTransactionRows: rowwise.length,
      chunkSpectraRowsPerS: Math.round(chunkRowsPerS),
      rowByRowSpectraRowsPerS: Math.round(rowwiseRowsPerS),
      chunkOverRowByRow: Number((chunkRowsPerS / rowwiseRowsPerS).toFixed(2)),
      note: 'writeRecording figures include the per-recording transaction (all tables, commit); fixedMsPerRecording is that cost alone',
    };
  } finally {
    cleanup();
  }
}
