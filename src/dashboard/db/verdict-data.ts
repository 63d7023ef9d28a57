// What a band check and a robustness run read, over duckdb-wasm: the dashboard's twin of
// src/analysis/band-check-runner.ts (loadBandCheckData) and of the row sets the robustness bench loads,
// built on the contrast loader (db/contrast-data.ts) so the rows are those of a compare run.
import type { AperiodicRow, ContrastData, Exclusion } from '../../core/contrast/data.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { Stage } from '../../core/stages.ts';
import type { PathDataSet } from '../../core/verdict/index.ts';

type Averaging = PathDataSet['averaging'];
import { numberColumn, stringColumn } from './arrow-rows.ts';
import { chooseRun, contrastParticipants, contrastPeaks, contrastSpectra, loadContrastData } from './contrast-data.ts';
import type { CohortSchema, RunInfo } from './queries.ts';
import { COHORT, literal, type SqlClient } from './sql-client.ts';
import { estimatorCondition, storedEstimator } from './estimator.ts';

const sameRange = (a: readonly number[], b: readonly number[]) => a[0] === b[0] && a[1] === b[1];

/** Distinct aperiodic fit ranges (Hz) stored for one run × stage × reference × averaging × method (and estimator), ordered. */
export async function storedFitRanges(db: SqlClient, runId: string, stage: Stage, reference: string, averaging: string, method: string, estimator?: string | null): Promise<[number, number][]> {
  const t = await db.query(
    `SELECT DISTINCT a.fit_lo_hz::DOUBLE AS lo, a.fit_hi_hz::DOUBLE AS hi
     FROM ${COHORT}.aperiodic a JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(runId)} AND a.stage = ${literal(stage)} AND a.reference = ${literal(reference)}
       AND a.averaging = ${literal(averaging)} AND a.method = ${literal(method)}${estimatorCondition('a.estimator', estimator)}
     ORDER BY 1, 2`,
  );
  const lo = numberColumn(t, 'lo');
  const hi = numberColumn(t, 'hi');
  return Array.from(lo, (v, i) => [v, hi[i]] as [number, number]);
}

/** Distinct fit ranges stored for a stage and method over every reference and averaging (what the robustness form offers). */
export async function fitRangeChoices(db: SqlClient, runs: readonly RunInfo[], stage: Stage, method: string): Promise<[number, number][]> {
  const t = await db.query(
    `SELECT DISTINCT a.fit_lo_hz::DOUBLE AS lo, a.fit_hi_hz::DOUBLE AS hi
     FROM ${COHORT}.aperiodic a JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(chooseRun(runs).runId)} AND a.stage = ${literal(stage)} AND a.method = ${literal(method)}
     ORDER BY 1, 2`,
  );
  const lo = numberColumn(t, 'lo');
  const hi = numberColumn(t, 'hi');
  return Array.from(lo, (v, i) => [v, hi[i]] as [number, number]);
}

export interface LoadedBandCheck {
  runId: string;
  toolVersion: string;
  runParameters: unknown;
  data: ContrastData;
  /** the one aperiodic fit range every stored fit of the analysis uses, Hz */
  fitRangeHz: [number, number];
}

/** Spectra, aperiodic fits and peaks of the contrast's stage(s), and the one fit range they share (as the command line). */
export async function loadBandCheckData(db: SqlClient, schema: CohortSchema, runs: readonly RunInfo[], c: Contrast, exclusions: readonly Exclusion[]): Promise<LoadedBandCheck> {
  const run = chooseRun(runs);
  const loaded = await loadContrastData(db, schema, runs, { ...c, measure: 'residual' }, exclusions);
  const stages: Stage[] = c.design === 'paired' && c.stages ? [...c.stages] : [c.stage];
  const ranges: [number, number][] = [];
  const estimator = storedEstimator(schema, c.estimator);
  for (const stage of stages) {
    const q = { runId: loaded.runId, stage, reference: c.reference, averaging: c.averaging, estimator };
    loaded.data.peaks.push(...(await contrastPeaks(db, q, c.aperiodicMethod)));
    for (const r of await storedFitRanges(db, loaded.runId, stage, c.reference, c.averaging, c.aperiodicMethod, estimator)) {
      if (!ranges.some((x) => sameRange(x, r))) ranges.push(r);
    }
  }
  if (ranges.length === 0) throw new Error(`no aperiodic fits (${c.aperiodicMethod}) stored for ${stages.join('/')}, reference ${c.reference}, averaging ${c.averaging} in run ${loaded.runId}`);
  if (ranges.length > 1) throw new Error(`the stored aperiodic fits use different fit ranges (${ranges.map((r) => `${r[0]}–${r[1]} Hz`).join(', ')}); a band check needs one range for every subject`);
  return { runId: loaded.runId, toolVersion: run.toolVersion, runParameters: run.parameters, data: loaded.data, fitRangeHz: ranges[0] };
}

/** Aperiodic fits of one run × stage × reference × averaging × method (and estimator) with one fit range. */
export async function aperiodicInFitRange(db: SqlClient, q: { runId: string; stage: Stage; reference: string; averaging: string; estimator?: string | null }, method: string, fitRangeHz: [number, number]): Promise<AperiodicRow[]> {
  if (!fitRangeHz.every(Number.isFinite)) throw new Error(`aperiodic fit range ${fitRangeHz.join('–')} Hz is not a pair of numbers`);
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, a.channel::VARCHAR AS channel,
            a."offset"::DOUBLE AS "offset", a.exponent::DOUBLE AS exponent, a.knee::DOUBLE AS knee
     FROM ${COHORT}.aperiodic a JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(q.runId)} AND a.stage = ${literal(q.stage)} AND a.reference = ${literal(q.reference)}
       AND a.averaging = ${literal(q.averaging)} AND a.method = ${literal(method)}
       AND a.fit_lo_hz = ${fitRangeHz[0]} AND a.fit_hi_hz = ${fitRangeHz[1]}${estimatorCondition('a.estimator', q.estimator)}
     ORDER BY r.subject, r.session NULLS FIRST, a.recording_id, a.channel`,
  );
  const subject = stringColumn(t, 'subject');
  const channel = stringColumn(t, 'channel');
  const session = t.getChild('session')!;
  const col = (name: string) => {
    const v = numberColumn(t, name);
    return (i: number) => (Number.isNaN(v[i]) ? null : v[i]);
  };
  const offset = col('offset');
  const exponent = col('exponent');
  const knee = col('knee');
  return subject.map((s, i) => ({ subject: s, session: (session.get(i) as string | null) ?? null, channel: channel[i], stage: q.stage, offset: offset(i), exponent: exponent(i), knee: knee(i) }));
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
  runs: readonly RunInfo[],
  c: Contrast,
  needs: readonly { reference: string; averaging: Averaging; estimator?: PathDataSet['estimator'] }[],
  exclusions: readonly Exclusion[],
): Promise<PathDataSet[]> {
  if (c.design === 'paired' && c.stages) throw new Error('a robustness run takes one stage; paired stages are not supported here (choose a groups or covariate design)');
  const run = chooseRun(runs);
  const people = await contrastParticipants(db, schema);
  const sets: PathDataSet[] = [];
  for (const { reference, averaging, estimator = 'welch' } of needs) {
    const q = { runId: run.runId, stage: c.stage, reference, averaging, estimator: storedEstimator(schema, estimator) };
    const spectra = await contrastSpectra(db, { ...q, channels: c.channels === 'all' ? undefined : c.channels });
    if (spectra.rows.length === 0) throw new Error(`no ${c.stage} spectra with reference ${reference}, averaging ${averaging} and estimator ${estimator} in run ${run.runId}`);
    const ranges = await storedFitRanges(db, run.runId, c.stage, reference, averaging, c.aperiodicMethod, q.estimator);
    // fitted peaks (method fit): individual bands and paths decided on frequency use them
    const base = { spectra, peaks: await contrastPeaks(db, q, 'fit'), participants: people, exclusions: [...exclusions] };
    if (ranges.length === 0) sets.push({ reference, averaging, estimator, fitRangeHz: null, data: { ...base, aperiodic: [] } });
    for (const r of ranges) sets.push({ reference, averaging, estimator, fitRangeHz: r, data: { ...base, aperiodic: await aperiodicInFitRange(db, q, c.aperiodicMethod, r) } });
  }
  return sets;
}
