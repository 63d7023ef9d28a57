// What a band check and a robustness run read: the contrast's rows (contrast-data.ts) with the
// peaks and the one stored fit range, and the robustness row sets. The one loader of `bandwise
// band-check` (src/analysis/band-check-runner.ts) and the dashboard.
import type { Exclusion } from '../core/contrast/data.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import type { PathDataSet } from '../core/verdict/index.ts';
import { keepSubjects, partData } from '../core/confirmation/part-data.ts';
import type { SqlClient } from './client.ts';
import { contrastParticipants, contrastStages, loadContrastData, type LoadedContrast } from './contrast-data.ts';
import { aperiodicInFitRange, peakRows, storedFitRanges } from './fits.ts';
import { chooseRun, type RunInfo } from './runs.ts';
import type { CohortSchema } from './schema.ts';
import { spectraRows } from './spectra.ts';
import { workflowOf } from './workflow.ts';
import { storedEstimator } from './estimator.ts';

export interface LoadedBandCheck extends LoadedContrast {
  /** the one aperiodic fit range every stored fit of the analysis uses, Hz */
  fitRangeHz: [number, number];
}

/** Spectra, aperiodic fits and peaks of the contrast's stage(s), and the one fit range they share; the run named, else the one chooseRun takes. */
export async function loadBandCheckData(
  db: SqlClient,
  schema: CohortSchema,
  runList: readonly RunInfo[],
  c: Contrast,
  exclusions: readonly Exclusion[],
  runId?: string,
): Promise<LoadedBandCheck> {
  const loaded = await loadContrastData(db, schema, runList, { ...c, measure: 'residual' }, exclusions, { runId });
  const stages = contrastStages(c);
  const ranges: [number, number][] = [];
  const estimator = storedEstimator(schema, c.estimator);
  for (const stage of stages) {
    const q = { runId: loaded.runId, stage, reference: c.reference, averaging: c.averaging, estimator };
    loaded.data.peaks.push(...keepSubjects(await peakRows(db, q, c.aperiodicMethod), loaded.view));
    for (const r of await storedFitRanges(db, loaded.runId, stage, c.reference, c.averaging, c.aperiodicMethod, estimator)) {
      if (!ranges.some((x) => x[0] === r[0] && x[1] === r[1])) ranges.push(r);
    }
  }
  if (ranges.length === 0)
    throw new Error(
      `no aperiodic fits (${c.aperiodicMethod}) stored for ${stages.join('/')}, reference ${c.reference}, averaging ${c.averaging} in run ${loaded.runId}`,
    );
  if (ranges.length > 1)
    throw new Error(
      `the stored aperiodic fits use different fit ranges (${ranges.map((r) => `${r[0]}–${r[1]} Hz`).join(', ')}); a band check needs one range for every subject`,
    );
  return { ...loaded, fitRangeHz: ranges[0] };
}

/**
 * The row sets of a robustness run: for each (reference, averaging, estimator) the stored spectra
 * and fitted peaks of the contrast's stage, and for each fit range stored there one set with the
 * fits of that range (a set without fits when none is stored). Spectra and peak rows are shared
 * between the sets of one (reference, averaging, estimator).
 */
export async function loadPathDataSets(
  db: SqlClient,
  schema: CohortSchema,
  runList: readonly RunInfo[],
  c: Contrast,
  needs: readonly { reference: string; averaging: PathDataSet['averaging']; estimator?: PathDataSet['estimator'] }[],
  exclusions: readonly Exclusion[],
): Promise<PathDataSet[]> {
  if (c.design === 'paired' && c.stages)
    throw new Error('a robustness run takes one stage; paired stages are not supported here (choose a groups or covariate design)');
  const run = chooseRun(runList);
  const people = await contrastParticipants(db, schema);
  const { view } = await workflowOf(db, schema);
  const sets: PathDataSet[] = [];
  for (const { reference, averaging, estimator = 'welch' } of needs) {
    const q = { runId: run.runId, stage: c.stage, reference, averaging, estimator: storedEstimator(schema, estimator) };
    const spectra = await spectraRows(db, { ...q, channels: c.channels === 'all' ? undefined : c.channels });
    if (spectra.rows.length === 0)
      throw new Error(`no ${c.stage} spectra with reference ${reference}, averaging ${averaging} and estimator ${estimator} in run ${run.runId}`);
    const ranges = await storedFitRanges(db, run.runId, c.stage, reference, averaging, c.aperiodicMethod, q.estimator);
    // fitted peaks (method fit): individual bands and paths decided on frequency use them
    const peaks = await peakRows(db, q, 'fit');
    // while a split exists, the exploration part only (groups coded while blinded)
    const base = partData(c, { spectra, peaks, participants: people, exclusions: [...exclusions], aperiodic: [] }, view);
    if (ranges.length === 0) sets.push({ reference, averaging, estimator, fitRangeHz: null, data: base });
    for (const r of ranges)
      sets.push({
        reference,
        averaging,
        estimator,
        fitRangeHz: r,
        data: { ...base, aperiodic: keepSubjects(await aperiodicInFitRange(db, q, c.aperiodicMethod, r), view) },
      });
  }
  return sets;
}
