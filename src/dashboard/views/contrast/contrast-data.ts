// The contrast view's data: the rows a contrast reads, cached per stage × reference × averaging ×
// measure so repeated runs do not read again, and the tables and maps of its result.
import type { ContrastData, Exclusion } from '../../../core/contrast/data.ts';
import type { CompareResult } from '../../../core/contrast/run.ts';
import type { Contrast } from '../../../core/contrast/spec.ts';
import type { Position3 } from '../../../core/montage/positions.ts';
import type { SqlClient } from '../../../queries/client.ts';
import { contrastMaxHz, loadContrastData } from '../../../queries/contrast-data.ts';
import type { RunInfo } from '../../../queries/runs.ts';
import type { CohortSchema } from '../../../queries/schema.ts';
import type { PromiseCache } from '../../analysis/analysis-run.svelte.ts';
import type { SpectraRows } from '../spectra/spectra-data.ts';

/** Reads ContrastData once per (stages, reference, averaging, measure, method, highest frequency read); exclusions applied on each use. */
export async function readContrastData(
  db: SqlClient,
  schema: CohortSchema,
  runs: readonly RunInfo[],
  cache: PromiseCache,
  c: Contrast,
  exclusions: readonly Exclusion[],
): Promise<{ runId: string; data: ContrastData }> {
  const stages = c.design === 'paired' && c.stages ? c.stages.join(',') : c.stage;
  const maxHz = contrastMaxHz(c);
  const key = [stages, c.reference, c.averaging, c.measure, c.aperiodicMethod, maxHz ?? 'all'].join('|');
  // log-psd and residual read no bin above fmaxHz: their lists are read cut there
  const { runId, data } = await cache.get(key, () => loadContrastData(db, schema, runs, c, [], { maxHz }));
  return { runId, data: { ...data, exclusions: [...exclusions] } };
}

/** Smallest cluster p (or smallest TFCE-corrected p), null when there is none. */
export function smallestP(r: CompareResult): number | null {
  const ps = r.clusters.map((k) => k.p);
  if (r.statistics.tfce) ps.push(...r.statistics.tfce.pCorrected);
  return ps.length > 0 ? Math.min(...ps) : null;
}

/** Mean statistic per channel over a cluster's frequency range (for its scalp map). */
export function clusterChannelMeans(r: CompareResult, clusterIndex: number): { channel: string; value: number; position?: Position3 | null }[] {
  const s = r.statistics;
  const k = s.clusters[clusterIndex];
  const F = s.freqsHz.length;
  return s.channels.map((channel, ch) => {
    let sum = 0;
    let n = 0;
    for (let f = 0; f < F; f++) {
      if (s.freqsHz[f] < k.fminHz - 1e-9 || s.freqsHz[f] > k.fmaxHz + 1e-9) continue;
      sum += s.stat[ch * F + f];
      n++;
    }
    const value = n > 0 ? sum / n : Number.NaN;
    // where the channel sits (stored at ingest); results written before the layout was recorded: by name
    return r.channelLayout ? { channel, value, position: r.channelLayout.positions[ch] ?? null } : { channel, value };
  });
}

/** The contrast's rows in the form the spectra figure reads. */
export function spectraRowsOf(c: Contrast, runId: string, data: ContrastData): SpectraRows {
  const rows = data.spectra.rows.filter((r) => r.stage === c.stage);
  return {
    runId,
    stage: c.stage,
    reference: c.reference,
    freqStartHz: data.spectra.freqStartHz,
    freqStepHz: data.spectra.freqStepHz,
    nBins: data.spectra.nBins,
    rows,
    aperiodic: data.aperiodic.filter((a) => a.stage === c.stage),
    participants: data.participants,
    channels: [...new Set(rows.map((r) => r.channel))],
  };
}
