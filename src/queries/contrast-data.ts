// What a contrast reads from the database, in the pure form of src/core/contrast (ContrastData):
// the one loader of `bandwise compare` (src/analysis/compare-runner.ts) and the dashboard.
import type { AperiodicRow, ContrastData, Exclusion, PeakRow, SpectrumRow } from '../core/contrast/data.ts';
import { measureNeeds } from '../core/contrast/measure.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import type { Stage } from '../core/stages.ts';
import type { SqlClient } from './client.ts';
import { participants } from './cohort.ts';
import { aperiodicRows, peakRows, recordedReferences } from './fits.ts';
import { chooseRun, type RunInfo } from './runs.ts';
import type { CohortSchema } from './schema.ts';
import { spectraRows } from './spectra.ts';

/** The rows an analysis read, with the run they came from. */
export interface LoadedContrast {
  runId: string;
  toolVersion: string;
  runParameters: unknown;
  data: ContrastData;
}

/** The stages a contrast reads: its two stages when paired over stages, else its one stage. */
export function contrastStages(c: Contrast): Stage[] {
  return c.design === 'paired' && c.stages ? [...c.stages] : [c.stage];
}

/** Highest frequency a contrast's measure reads from the stored lists (Hz), undefined for all of it. */
export function contrastMaxHz(c: Contrast): number | undefined {
  return c.measure === 'log-psd' || c.measure === 'residual' ? c.fmaxHz : undefined;
}

/** The participants table as the contrast reads it: numbers for numeric columns, text otherwise. */
export async function contrastParticipants(db: SqlClient, schema: CohortSchema): Promise<ContrastData['participants']> {
  const p = await participants(db, schema);
  return p.rows.map((r) => Object.fromEntries(Object.entries(r).map(([k, v]) => [k, typeof v === 'boolean' ? String(v) : v])));
}

/**
 * Everything `contrast` needs from the database, with the given exclusion list: the run named
 * (options.runId), else the one chooseRun takes; with options.maxHz the spectra only up to that
 * frequency (contrastMaxHz: what the contrast's own measure reads — not for callers that compute
 * other measures from the same rows).
 */
export async function loadContrastData(
  db: SqlClient,
  schema: CohortSchema,
  runList: readonly RunInfo[],
  c: Contrast,
  exclusions: readonly Exclusion[],
  options: { runId?: string; maxHz?: number } = {},
): Promise<LoadedContrast> {
  const run = chooseRun(runList, options.runId);
  const stages = contrastStages(c);
  const needs = measureNeeds(c.measure);
  // all queries issued together (duckdb-wasm runs them one after another in its worker, without
  // waits between; the Node client one after another on its connection); rows joined with
  // concat, not push(...rows), which overflows the call stack at cohort size (10⁵ rows)
  const [perStage, participantRows, references] = await Promise.all([
    Promise.all(
      stages.map((stage) => {
        const q = { runId: run.runId, stage, reference: c.reference, averaging: c.averaging };
        return Promise.all([
          spectraRows(db, { ...q, channels: c.channels === 'all' ? undefined : c.channels }, options.maxHz),
          needs.aperiodic ? aperiodicRows(db, q, c.aperiodicMethod) : Promise.resolve([]),
          needs.peaks ? peakRows(db, q, c.aperiodicMethod) : Promise.resolve([]),
        ]);
      }),
    ),
    contrastParticipants(db, schema),
    // 'recorded' spectra are pooled only when recorded against one reference (src/core/contrast/recorded-references.ts)
    c.reference === 'recorded' ? recordedReferences(db, run.runId) : Promise.resolve(undefined),
  ]);
  let axis = { freqStartHz: 0, freqStepHz: 0, nBins: 0 };
  for (const [m] of perStage) {
    if (m.nBins > 0) {
      if (axis.nBins > 0 && (axis.nBins !== m.nBins || axis.freqStepHz !== m.freqStepHz)) throw new Error('stages have different frequency axes');
      axis = { freqStartHz: m.freqStartHz, freqStepHz: m.freqStepHz, nBins: m.nBins };
    }
  }
  const rows: SpectrumRow[] = ([] as SpectrumRow[]).concat(...perStage.map(([m]) => m.rows));
  const aperiodic: AperiodicRow[] = ([] as AperiodicRow[]).concat(...perStage.map(([, a]) => a));
  const peaks: PeakRow[] = ([] as PeakRow[]).concat(...perStage.map(([, , p]) => p));
  performance.mark('bandwise:contrast-data');
  if (rows.length === 0) throw new Error(`no ${stages.join('/')} spectra with reference ${c.reference} and averaging ${c.averaging} in run ${run.runId}`);
  return {
    runId: run.runId,
    toolVersion: run.toolVersion,
    runParameters: run.parameters,
    data: { spectra: { ...axis, rows }, aperiodic, peaks, participants: participantRows, exclusions: [...exclusions], recordedReferences: references },
  };
}
