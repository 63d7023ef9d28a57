/**
 * The database facts a methods report states (src/queries/report-facts.ts over Node's DuckDB),
 * and the ledger counts of a database file.
 */
import type { Contrast } from '../core/contrast/spec.ts';
import type { DatabaseFacts } from '../core/report/facts.ts';
import { ledgerCounts, type LedgerCounts } from '../core/report/ledger.ts';
import { databaseFacts } from '../queries/report-facts.ts';
import { runs } from '../queries/runs.ts';
import { readLedger } from './ledger.ts';
import { withDatabase } from './store-client.ts';

/** Opens the database read-only and gathers its facts for the run named, else the one chooseRun takes. */
export function databaseFactsOf(dbPath: string, c: Contrast, runId?: string): Promise<DatabaseFacts> {
  return withDatabase(dbPath, async (db) => databaseFacts(db, dbPath, await runs(db), c, runId));
}

/** Ledger counts for a database file (its base name, as the ledger stores it). */
export function ledgerCountsOf(ledgerFile: string, dbFile: string): LedgerCounts {
  return ledgerCounts(readLedger(ledgerFile), dbFile.split(/[\\/]/).pop()!);
}
