// Named queries over the stored aperiodic fits and peaks, and the channels' recorded references.
import type { AperiodicRow, PeakRow, RecordedReference } from '../core/contrast/data.ts';
import type { Stage } from '../core/stages.ts';
import { COHORT, doubleLiteral, literal, numbers, numbersOrNull, texts, textsOrNull, type SqlClient } from './client.ts';
import { chooseRun, type RunInfo } from './runs.ts';
import type { SpectraKey } from './spectra.ts';
import { estimatorCondition } from './estimator.ts';

const fitWhere = (table: 'a' | 'p', q: SpectraKey, method: string) =>
  `r.run_id = ${literal(q.runId)} AND ${table}.stage = ${literal(q.stage)} AND ${table}.reference = ${literal(q.reference)}
       AND ${table}.averaging = ${literal(q.averaging)} AND ${table}.method = ${literal(method)}${estimatorCondition(`${table}.estimator`, q.estimator)}`;

async function aperiodicWhere(db: SqlClient, q: SpectraKey, where: string): Promise<AperiodicRow[]> {
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, a.channel::VARCHAR AS channel,
            a."offset"::DOUBLE AS "offset", a.exponent::DOUBLE AS exponent, a.knee::DOUBLE AS knee
     FROM ${COHORT}.aperiodic a JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE ${where}
     ORDER BY r.subject, r.session NULLS FIRST, a.recording_id, a.channel, a.fit_lo_hz, a.fit_hi_hz`,
  );
  const session = textsOrNull(t, 'session');
  const channel = texts(t, 'channel');
  const offset = numbersOrNull(t, 'offset');
  const exponent = numbersOrNull(t, 'exponent');
  const knee = numbersOrNull(t, 'knee');
  return texts(t, 'subject').map((s, i) => ({
    subject: s,
    session: session[i],
    channel: channel[i],
    stage: q.stage,
    offset: offset[i],
    exponent: exponent[i],
    knee: knee[i],
  }));
}

/** Aperiodic fits of one run × stage × reference × averaging and method. */
export function aperiodicRows(db: SqlClient, q: SpectraKey, method: string): Promise<AperiodicRow[]> {
  return aperiodicWhere(db, q, fitWhere('a', q, method));
}

/** Aperiodic fits of one run × stage × reference × averaging × method with one fit range (Hz). */
export function aperiodicInFitRange(db: SqlClient, q: SpectraKey, method: string, fitRangeHz: [number, number]): Promise<AperiodicRow[]> {
  if (!fitRangeHz.every(Number.isFinite)) throw new Error(`aperiodic fit range ${fitRangeHz.join('–')} Hz is not a pair of numbers`);
  return aperiodicWhere(
    db,
    q,
    `${fitWhere('a', q, method)} AND a.fit_lo_hz = ${doubleLiteral(fitRangeHz[0])} AND a.fit_hi_hz = ${doubleLiteral(fitRangeHz[1])}`,
  );
}

/** Fitted peaks of one run × stage × reference × averaging and method. */
export async function peakRows(db: SqlClient, q: SpectraKey, method: string): Promise<PeakRow[]> {
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, p.channel::VARCHAR AS channel,
            p.center_hz::DOUBLE AS center_hz, p.height::DOUBLE AS height, p.bandwidth_hz::DOUBLE AS bandwidth_hz
     FROM ${COHORT}.peaks p JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE ${fitWhere('p', q, method)}
     ORDER BY r.subject, r.session NULLS FIRST, p.recording_id, p.channel, p.center_hz`,
  );
  const session = textsOrNull(t, 'session');
  const channel = texts(t, 'channel');
  const center = numbers(t, 'center_hz');
  const height = numbers(t, 'height');
  const width = numbers(t, 'bandwidth_hz');
  return texts(t, 'subject').map((s, i) => ({
    subject: s,
    session: session[i],
    channel: channel[i],
    stage: q.stage,
    centerHz: center[i],
    height: height[i],
    bandwidthHz: width[i],
  }));
}

async function fitRanges(db: SqlClient, where: string): Promise<[number, number][]> {
  const t = await db.query(
    `SELECT DISTINCT a.fit_lo_hz::DOUBLE AS lo, a.fit_hi_hz::DOUBLE AS hi
     FROM ${COHORT}.aperiodic a JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE ${where}
     ORDER BY 1, 2`,
  );
  const lo = numbers(t, 'lo');
  const hi = numbers(t, 'hi');
  return Array.from(lo, (v, i) => [v, hi[i]] as [number, number]);
}

/** Distinct aperiodic fit ranges (Hz) stored for one run × stage × reference × averaging × method (and estimator), ordered. */
export function storedFitRanges(
  db: SqlClient,
  runId: string,
  stage: Stage,
  reference: string,
  averaging: string,
  method: string,
  estimator?: string | null,
): Promise<[number, number][]> {
  return fitRanges(db, fitWhere('a', { runId, stage, reference, averaging, estimator }, method));
}

/** Distinct fit ranges (Hz) stored for a stage and method over every reference and averaging of the chosen run (what the robustness form offers). */
export function fitRangeChoices(db: SqlClient, runList: readonly RunInfo[], stage: Stage, method: string): Promise<[number, number][]> {
  return fitRanges(db, `r.run_id = ${literal(chooseRun(runList).runId)} AND a.stage = ${literal(stage)} AND a.method = ${literal(method)}`);
}

/** What each stored channel of a run was recorded against, as its label names it (channels.reference_electrode). */
export async function recordedReferences(db: SqlClient, runId: string): Promise<RecordedReference[]> {
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, c.channel::VARCHAR AS channel, c.reference_electrode::VARCHAR AS reference_electrode
     FROM ${COHORT}.channels c JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(runId)}
     ORDER BY r.subject, r.session NULLS FIRST, c.recording_id, c.channel`,
  );
  const session = textsOrNull(t, 'session');
  const channel = texts(t, 'channel');
  const reference = textsOrNull(t, 'reference_electrode');
  return texts(t, 'subject').map((s, i) => ({ subject: s, session: session[i], channel: channel[i], referenceElectrode: reference[i] }));
}
