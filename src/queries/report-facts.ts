// The database facts a methods report states (src/core/report DatabaseFacts): the run and its
// parameters, recordings, sampling rates, channel counts, epochs and rejections per stage, the
// stored aperiodic fit ranges, the recorded derivations, and the warnings and recording statuses.
import type { Contrast } from '../core/contrast/spec.ts';
import type { DatabaseFacts, WarningFacts } from '../core/report/index.ts';
import { COHORT, literal, rowsOf, type SqlClient } from './client.ts';
import { storedFitRanges } from './fits.ts';
import { chooseRun, type RunInfo } from './runs.ts';

/** Number of recordings of a run. */
export async function recordingCount(db: SqlClient, runId: string): Promise<number> {
  const [r] = rowsOf(await db.query(`SELECT count(*)::DOUBLE AS n FROM ${COHORT}.recordings WHERE run_id = ${literal(runId)}`));
  return Number(r.n);
}

/** Distinct sampling rates of a run's channels, Hz, ascending. */
export async function samplingRates(db: SqlClient, runId: string): Promise<number[]> {
  const rows = rowsOf(
    await db.query(
      `SELECT DISTINCT c.fs_hz::DOUBLE AS fs FROM ${COHORT}.channels c JOIN ${COHORT}.recordings r USING (recording_id) WHERE r.run_id = ${literal(runId)} ORDER BY 1`,
    ),
  );
  return rows.map((r) => Number(r.fs));
}

/** Fewest and most channels of a run's recordings. */
export async function channelsPerRecording(db: SqlClient, runId: string): Promise<{ min: number; max: number }> {
  const [r] = rowsOf(
    await db.query(
      `SELECT min(n)::DOUBLE AS lo, max(n)::DOUBLE AS hi FROM (SELECT count(*) AS n FROM ${COHORT}.channels c JOIN ${COHORT}.recordings r USING (recording_id)
       WHERE r.run_id = ${literal(runId)} GROUP BY c.recording_id)`,
    ),
  );
  return { min: Number(r?.lo ?? 0), max: Number(r?.hi ?? 0) };
}

/** Channel-epochs per stage (kept epochs × the recording's channels) and rejections by reason. */
export async function stageEpochCounts(db: SqlClient, runId: string): Promise<DatabaseFacts['epochs']> {
  const epochs = rowsOf(
    await db.query(
      `SELECT e.stage::VARCHAR AS stage, sum(k.n)::DOUBLE AS channel_epochs FROM ${COHORT}.epochs e JOIN ${COHORT}.recordings r USING (recording_id)
         JOIN (SELECT recording_id, count(*) AS n FROM ${COHORT}.channels GROUP BY recording_id) k USING (recording_id)
       WHERE r.run_id = ${literal(runId)} AND e.drop_reason IS NULL GROUP BY e.stage ORDER BY e.stage`,
    ),
  );
  const rejected = rowsOf(
    await db.query(
      `SELECT e.stage::VARCHAR AS stage, x.reason::VARCHAR AS reason, count(*)::DOUBLE AS n FROM ${COHORT}.epoch_rejections x
         JOIN ${COHORT}.epochs e USING (recording_id, epoch) JOIN ${COHORT}.recordings r USING (recording_id)
       WHERE r.run_id = ${literal(runId)} AND x.reference = 'recorded' GROUP BY e.stage, x.reason ORDER BY 1, 2`,
    ),
  );
  return epochs.map((e) => {
    const stage = String(e.stage);
    const mine = rejected.filter((x) => String(x.stage) === stage);
    return {
      stage,
      channelEpochs: Number(e.channel_epochs),
      rejected: mine.reduce((s, x) => s + Number(x.n), 0),
      byReason: Object.fromEntries(mine.map((x) => [String(x.reason), Number(x.n)])),
    };
  });
}

/** The EEG channels of a run as recorded: each reference a label names, with its number of recordings. */
export async function recordedDerivations(db: SqlClient, runId: string): Promise<NonNullable<DatabaseFacts['recordedDerivations']>> {
  const rows = rowsOf(
    await db.query(
      `SELECT c.channel::VARCHAR AS channel, c.reference_electrode::VARCHAR AS reference_electrode, count(DISTINCT c.recording_id)::DOUBLE AS n
       FROM ${COHORT}.channels c JOIN ${COHORT}.recordings r USING (recording_id)
       WHERE r.run_id = ${literal(runId)} AND c.type = 'EEG' GROUP BY 1, 2 ORDER BY 1, 2 NULLS FIRST`,
    ),
  );
  return rows.map((x) => ({
    channel: String(x.channel),
    referenceElectrode: x.reference_electrode === null ? null : String(x.reference_electrode),
    recordings: Number(x.n),
  }));
}

/** The run's warnings table rows per step and its recordings per status (a database written before the warnings table has none). */
export async function warningFacts(db: SqlClient, runId: string): Promise<WarningFacts> {
  const [t] = rowsOf(await db.query(`SELECT count(*)::DOUBLE AS n FROM duckdb_tables() WHERE database_name = ${literal(COHORT)} AND table_name = 'warnings'`));
  const steps =
    Number(t.n) > 0
      ? rowsOf(
          await db.query(
            `SELECT step::VARCHAR AS step, count(*)::DOUBLE AS n FROM ${COHORT}.warnings WHERE run_id = ${literal(runId)} GROUP BY step ORDER BY step`,
          ),
        )
      : [];
  const status = rowsOf(
    await db.query(
      `SELECT status::VARCHAR AS status, count(*)::DOUBLE AS n FROM ${COHORT}.recordings WHERE run_id = ${literal(runId)} GROUP BY status ORDER BY status`,
    ),
  );
  return {
    byStep: Object.fromEntries(steps.map((r) => [String(r.step), Number(r.n)])),
    recordingsByStatus: Object.fromEntries(status.map((r) => [String(r.status), Number(r.n)])),
  };
}

/** Everything a methods report states about the database (`source`: its path or address), for the analysis' stage, reference and averaging; the run named, else the one chooseRun takes. */
export async function databaseFacts(db: SqlClient, source: string, runList: readonly RunInfo[], c: Contrast, runId?: string): Promise<DatabaseFacts> {
  const run = chooseRun(runList, runId);
  const stage = c.design === 'paired' && c.stages ? c.stages[0] : c.stage;
  return {
    file: source.split(/[\\/]/).pop()!,
    runId: run.runId,
    toolVersion: run.toolVersion,
    ingestParameters: run.parameters,
    recordings: await recordingCount(db, run.runId),
    samplingRatesHz: await samplingRates(db, run.runId),
    channelsPerRecording: await channelsPerRecording(db, run.runId),
    epochs: await stageEpochCounts(db, run.runId),
    fitRangesHz: await storedFitRanges(db, run.runId, stage, c.reference, c.averaging, c.aperiodicMethod),
    recordedDerivations: await recordedDerivations(db, run.runId),
    warnings: await warningFacts(db, run.runId),
  };
}
