/**
 * The band check on a database: reads the contrast's spectra, aperiodic fits and peaks and the one
 * fit range they share, then runs the band check of src/core/verdict on them.
 */
import type { Contrast } from '../core/contrast/spec.ts';
import type { Exclusion } from '../core/contrast/data.ts';
import type { Band } from '../core/spectrum/bands.ts';
import { bandCheck, type BandCheckOptions, type BandCheckResult } from '../core/verdict/index.ts';
import { openStore, type Store } from '../../ingest/store/index.ts';
import { readPeaks } from './store-read.ts';
import { loadContrastData, type LoadedContrast } from './compare-runner.ts';
import { storedFitRanges } from './report-facts.ts';

export interface BandCheckData extends LoadedContrast {
  fitRangeHz: [number, number];
}

/** Spectra, aperiodic fits and peaks of the contrast's stage(s), and the one fit range they share. */
export async function loadBandCheckData(store: Store, c: Contrast, exclusions: Exclusion[], runId?: string, file?: string): Promise<BandCheckData> {
  const loaded = await loadContrastData(store, { ...c, measure: 'residual' }, exclusions, runId, file);
  const stages = c.design === 'paired' && c.stages ? [...c.stages] : [c.stage];
  const ranges: [number, number][] = [];
  for (const stage of stages) {
    const q = { runId: loaded.runId, stage, reference: c.reference, averaging: c.averaging, method: c.aperiodicMethod };
    for (const p of await readPeaks(store, q)) {
      loaded.data.peaks.push({ subject: p.subject, session: p.session, channel: p.channel, stage, centerHz: p.centerHz, height: p.height, bandwidthHz: p.bandwidthHz });
    }
    for (const r of await storedFitRanges(store, loaded.runId, stage, c.reference, c.averaging, c.aperiodicMethod)) {
      if (!ranges.some((x) => x[0] === r[0] && x[1] === r[1])) ranges.push(r);
    }
  }
  if (ranges.length === 0) throw new Error(`no aperiodic fits (${c.aperiodicMethod}) stored for ${stages.join('/')}, reference ${c.reference}, averaging ${c.averaging} in run ${loaded.runId}`);
  if (ranges.length > 1) throw new Error(`the stored aperiodic fits use different fit ranges (${ranges.map((r) => `${r[0]}–${r[1]} Hz`).join(', ')}); a band check needs one range for every subject`);
  return { ...loaded, fitRangeHz: ranges[0] };
}

export interface BandCheckRun extends BandCheckResult {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown; runFinished: boolean };
}

export async function bandCheckDatabase(dbPath: string, c: Contrast, band: Band, exclusions: Exclusion[], options: Omit<BandCheckOptions, 'fitRangeHz'> = {}, runId?: string): Promise<BandCheckRun> {
  const store = await openStore(dbPath, { readOnly: true });
  try {
    const loaded = await loadBandCheckData(store, c, exclusions, runId, dbPath);
    const result = bandCheck(c, band, loaded.data, { ...options, fitRangeHz: loaded.fitRangeHz });
    return { ...result, database: { file: dbPath.split(/[\\/]/).pop()!, runId: loaded.runId, toolVersion: loaded.toolVersion, ingestParameters: loaded.runParameters, runFinished: loaded.runFinished } };
  } finally {
    await store.close();
  }
}
