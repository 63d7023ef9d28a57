/**
 * Gathers the database facts a methods report states (src/core/report): the run and its
 * parameters, recordings, sampling rates, channel counts, epochs and rejections per stage, and
 * the stored aperiodic fit ranges; and reads the ledger counts.
 */
import type { DuckDBValue } from '@duckdb/node-api';
import { openStore, type Store } from '../../ingest/store/index.ts';
import { chooseRun } from './compare-runner.ts';
import { readLedger } from './ledger.ts';
import { ledgerCounts, type DatabaseFacts, type LedgerCounts } from '../core/report/facts.ts';
import type { Contrast } from '../core/contrast/spec.ts';

async function rows(store: Store, sql: string, values: DuckDBValue[]): Promise<Record<string, unknown>[]> {
  return store.exclusive(async () => (await store.connection.runAndReadAll(sql, values)).getRowObjectsJS());
}

/** Distinct aperiodic fit ranges stored for one stage, reference and averaging of a run. */
export async function storedFitRanges(store: Store, runId: string, stage: string, reference: string, averaging: string, method = 'fit'): Promise<[number, number][]> {
  const r = await rows(
    store,
    `SELECT DISTINCT a.fit_lo_hz, a.fit_hi_hz FROM aperiodic a JOIN recordings r USING (recording_id)
      WHERE r.run_id = $1 AND a.stage = $2 AND a.reference = $3 AND a.averaging = $4 AND a.method = $5
      ORDER BY 1, 2`,
    [runId, stage, reference, averaging, method],
  );
  return r.map((x) => [Number(x.fit_lo_hz), Number(x.fit_hi_hz)]);
}

export async function databaseFacts(store: Store, file: string, c: Contrast, runId?: string): Promise<DatabaseFacts> {
  const run = await chooseRun(store, runId, file);
  const recs = await rows(store, 'SELECT count(*) AS n FROM recordings WHERE run_id = $1', [run.runId]);
  const fs = await rows(store, 'SELECT DISTINCT c.fs_hz FROM channels c JOIN recordings r USING (recording_id) WHERE r.run_id = $1 ORDER BY 1', [run.runId]);
  const ch = await rows(store, 'SELECT min(n) AS lo, max(n) AS hi FROM (SELECT count(*) AS n FROM channels c JOIN recordings r USING (recording_id) WHERE r.run_id = $1 GROUP BY c.recording_id)', [run.runId]);
  // channel-epochs per stage: kept epochs × the recording's channels
  const epochs = await rows(
    store,
    `SELECT e.stage, sum(k.n) AS channel_epochs FROM epochs e JOIN recordings r USING (recording_id)
       JOIN (SELECT recording_id, count(*) AS n FROM channels GROUP BY recording_id) k USING (recording_id)
      WHERE r.run_id = $1 AND e.drop_reason IS NULL GROUP BY e.stage ORDER BY e.stage`,
    [run.runId],
  );
  const rejected = await rows(
    store,
    `SELECT e.stage, x.reason, count(*) AS n FROM epoch_rejections x JOIN epochs e USING (recording_id, epoch)
       JOIN recordings r USING (recording_id) WHERE r.run_id = $1 AND x.reference = 'recorded' GROUP BY e.stage, x.reason`,
    [run.runId],
  );
  const stages = epochs.map((e) => {
    const stage = String(e.stage);
    const mine = rejected.filter((x) => String(x.stage) === stage);
    return {
      stage,
      channelEpochs: Number(e.channel_epochs),
      rejected: mine.reduce((s, x) => s + Number(x.n), 0),
      byReason: Object.fromEntries(mine.map((x) => [String(x.reason), Number(x.n)])),
    };
  });
  const stage = c.design === 'paired' && c.stages ? c.stages[0] : c.stage;
  return {
    file: file.split(/[\\/]/).pop()!,
    runId: run.runId,
    toolVersion: run.toolVersion,
    runFinished: run.finished,
    ingestParameters: run.parameters,
    recordings: Number(recs[0].n),
    samplingRatesHz: fs.map((x) => Number(x.fs_hz)),
    channelsPerRecording: { min: Number(ch[0]?.lo ?? 0), max: Number(ch[0]?.hi ?? 0) },
    epochs: stages,
    fitRangesHz: await storedFitRanges(store, run.runId, stage, c.reference, c.averaging, c.aperiodicMethod),
    recordedDerivations: await recordedDerivations(store, run.runId),
  };
}

/** The EEG channels of a run as recorded: each reference a label names, with its number of recordings. */
export async function recordedDerivations(store: Store, runId: string): Promise<NonNullable<DatabaseFacts['recordedDerivations']>> {
  const r = await rows(
    store,
    `SELECT c.channel, c.reference_electrode, count(DISTINCT c.recording_id) AS n FROM channels c JOIN recordings r USING (recording_id)
      WHERE r.run_id = $1 AND c.type = 'EEG' GROUP BY 1, 2 ORDER BY 1, 2 NULLS FIRST`,
    [runId],
  );
  return r.map((x) => ({ channel: String(x.channel), referenceElectrode: x.reference_electrode === null ? null : String(x.reference_electrode), recordings: Number(x.n) }));
}

/** Opens the database read-only and gathers its facts. */
export async function databaseFactsOf(dbPath: string, c: Contrast, runId?: string): Promise<DatabaseFacts> {
  const store = await openStore(dbPath, { readOnly: true });
  try {
    return await databaseFacts(store, dbPath, c, runId);
  } finally {
    await store.close();
  }
}

/** Ledger counts for a database file (its base name, as the ledger stores it). */
export function ledgerCountsOf(ledgerFile: string, dbFile: string): LedgerCounts {
  return ledgerCounts(readLedger(ledgerFile), dbFile.split(/[\\/]/).pop()!);
}
