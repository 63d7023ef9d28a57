// The contrast view's data: what the form offers (from the database) and the rows a contrast reads,
// cached per stage × reference × averaging × measure so repeated runs do not read again.
import type { ContrastData, Exclusion } from '../../../core/contrast/data.ts';
import type { CompareResult } from '../../../core/contrast/run.ts';
import type { Contrast } from '../../../core/contrast/spec.ts';
import type { Row } from '../../db/arrow-rows.ts';
import { contrastMaxHz, loadContrastData } from '../../db/contrast-data.ts';
import { participants, type CohortSchema, type RunInfo } from '../../db/queries.ts';
import { spectraChoices } from '../../db/quality-queries.ts';
import type { SqlClient } from '../../db/sql-client.ts';
import type { SpectraRows } from '../spectra/spectra-data.ts';
import { ALPHA } from './contrast-charts.ts';

export interface FormChoices {
  /** participants columns: text ones with their values, numeric ones */
  textColumns: Map<string, string[]>;
  numericColumns: string[];
  stages: string[];
  references: string[];
  averagings: string[];
}

export async function loadChoices(db: SqlClient, schema: CohortSchema): Promise<FormChoices> {
  const p = await participants(db, schema);
  const textColumns = new Map<string, string[]>();
  const numericColumns: string[] = [];
  for (const c of p.columns) {
    if (c.name === 'subject') continue;
    const values = p.rows.map((r) => r[c.name]).filter((v) => v !== null);
    if (values.every((v) => typeof v === 'number')) numericColumns.push(c.name);
    else textColumns.set(c.name, [...new Set(values.map(String))].sort());
  }
  const combos = await spectraChoices(db);
  const uniq = (k: 'stage' | 'reference' | 'averaging') => [...new Set(combos.map((c) => c[k]))];
  return { textColumns, numericColumns, stages: uniq('stage'), references: uniq('reference'), averagings: uniq('averaging') };
}

/** Reads ContrastData once per (stages, reference, averaging, measure, highest frequency read); exclusions applied on each use. */
export class ContrastDataCache {
  private cache = new Map<string, Promise<{ runId: string; data: ContrastData }>>();

  constructor(
    private readonly db: SqlClient,
    private readonly schema: CohortSchema,
    private readonly runs: readonly RunInfo[],
  ) {}

  async get(c: Contrast, exclusions: readonly Exclusion[]): Promise<{ runId: string; data: ContrastData }> {
    const stages = c.design === 'paired' && c.stages ? c.stages.join(',') : c.stage;
    const key = [stages, c.reference, c.averaging, c.measure, c.aperiodicMethod, contrastMaxHz(c) ?? 'all'].join('|');
    let entry = this.cache.get(key);
    if (entry === undefined) {
      // log-psd and residual read no bin above fmaxHz: their lists are read cut there
      entry = loadContrastData(this.db, this.schema, this.runs, c, [], contrastMaxHz(c));
      entry.catch(() => this.cache.delete(key));
      this.cache.set(key, entry);
    }
    const { runId, data } = await entry;
    return { runId, data: { ...data, exclusions: [...exclusions] } };
  }
}

/** Smallest cluster p (or smallest TFCE-corrected p), null when there is none. */
export function smallestP(r: CompareResult): number | null {
  const ps = r.clusters.map((k) => k.p);
  if (r.statistics.tfce) ps.push(...r.statistics.tfce.pCorrected);
  return ps.length > 0 ? Math.min(...ps) : null;
}

/** The cluster table's rows. */
export function clusterRows(r: CompareResult): Row[] {
  return r.clusters.map((k, i) => ({
    cluster: i + 1,
    sign: k.sign > 0 ? '+' : '−',
    fmin_hz: k.fminHz,
    fmax_hz: k.fmaxHz,
    channels: k.channels.join(' '),
    mass: k.mass,
    size: k.size,
    p: k.p,
    significant: k.p < ALPHA,
  }));
}

/** Mean statistic per channel over a cluster's frequency range (for its scalp map). */
export function clusterChannelMeans(r: CompareResult, clusterIndex: number): { channel: string; value: number }[] {
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
    return { channel, value: n > 0 ? sum / n : Number.NaN };
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
