// What a contrast reads from the database, in the pure form of src/core/contrast (ContrastData):
// the one loader of `bandwise compare` (src/analysis/compare-runner.ts) and the dashboard. While a
// split exists it hands over one part's subjects only (src/core/confirmation/part-data.ts).
import type { AperiodicRow, ContrastData, Exclusion, PeakRow, SpectrumRow } from '../core/contrast/data.ts';
import { measureNeeds } from '../core/contrast/measure.ts';
import { ContrastDataError } from '../core/contrast/data-error.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import type { Stage } from '../core/stages.ts';
import { partData, type PartView } from '../core/confirmation/part-data.ts';
import type { Part } from '../core/confirmation/split.ts';
import { COHORT, rowsOf, type SqlClient } from './client.ts';
import { participants } from './cohort.ts';
import { aperiodicRows, peakRows, recordedReferences } from './fits.ts';
import { channelPositions } from './positions.ts';
import { chooseRun, type RunInfo } from './runs.ts';
import type { CohortSchema } from './schema.ts';
import { spectraRows, storedReferences } from './spectra.ts';
import { storedEstimator } from './estimator.ts';
import { partViewOf, workflowOf } from './workflow.ts';

/** The rows an analysis read, with the run they came from. */
export interface LoadedContrast {
  runId: string;
  toolVersion: string;
  runParameters: unknown;
  /** false for a run that stopped before its end (read only when named: src/queries/runs.ts) */
  runFinished: boolean;
  data: ContrastData;
  /** the part of the split the rows are restricted to (null: no split, every subject) */
  view: PartView | null;
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
 * other measures from the same rows). While a split exists, only the subjects of options.part
 * (default: the exploration part, its blinded column coded; the confirmation part is for
 * `bandwise confirm` only).
 */
export async function loadContrastData(
  db: SqlClient,
  schema: CohortSchema,
  runList: readonly RunInfo[],
  c: Contrast,
  exclusions: readonly Exclusion[],
  options: { runId?: string; maxHz?: number; part?: Part } = {},
): Promise<LoadedContrast> {
  const run = chooseRun(runList, options.runId);
  const view = partViewOf(await workflowOf(db, schema), options.part ?? 'exploration');
  if (view === null && options.part === 'confirmation') throw new Error('the database holds no split, so it has no confirmation part');
  const stages = contrastStages(c);
  const needs = measureNeeds(c.measure, c.bandDefinition);
  const estimator = storedEstimator(schema, c.estimator);
  // all queries issued together (duckdb-wasm runs them one after another in its worker, without
  // waits between; the Node client one after another on its connection); rows joined with
  // concat, not push(...rows), which overflows the call stack at cohort size (10⁵ rows)
  const [perStage, participantRows, references, positions] = await Promise.all([
    Promise.all(
      stages.map((stage) => {
        const q = { runId: run.runId, stage, reference: c.reference, averaging: c.averaging, estimator };
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
    // the channels' positions, for the neighbours of a spatial cluster test (src/core/contrast/channel-layout.ts)
    channelPositions(db, run.runId),
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
  if (rows.length === 0) {
    const q = (v: string) => `'${v.replaceAll("'", "''")}'`;
    const stored = rowsOf(
      await db.query(
        `SELECT DISTINCT s.stage::VARCHAR AS stage FROM ${COHORT}.spectra s JOIN ${COHORT}.recordings r USING (recording_id)
         WHERE r.run_id = ${q(run.runId)} AND s.reference = ${q(c.reference)} AND s.averaging = ${q(c.averaging)} ORDER BY stage`,
      ),
    ).map((r) => String(r.stage));
    throw new ContrastDataError(
      `no ${stages.join('/')} spectra with reference ${c.reference}, averaging ${c.averaging} and estimator ${c.estimator} in run ${run.runId}; ` +
        (stored.length > 0
          ? `stored stages: ${stored.join(', ')}`
          : `no stage has spectra of that reference and averaging (stored references: ${(await storedReferences(db, run.runId)).join(', ') || 'none'})`),
    );
  }
  return {
    runId: run.runId,
    toolVersion: run.toolVersion,
    runFinished: run.finishedAt !== null,
    runParameters: run.parameters,
    data: partData(
      c,
      { spectra: { ...axis, rows }, aperiodic, peaks, participants: participantRows, exclusions: [...exclusions], recordedReferences: references, positions },
      view,
    ),
    view,
  };
}
