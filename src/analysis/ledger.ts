/**
 * The ledger: every contrast and band check run on a database, one JSON line each (settings,
 * time, smallest p, the analysis's identity), so a report can state how many distinct analyses
 * were tried and how many were significant (src/core/report/ledger.ts counts them). Trying many
 * analysis variants inflates false positives; the ledger makes it visible. The dashboard server
 * appends the browser's analyses to the same file.
 */
import { appendFileSync, existsSync, readFileSync } from 'node:fs';
import { ledgerEntry, type LedgerEntry, type LedgerInput as CoreLedgerInput } from '../core/report/ledger.ts';
import { runDataIdentity } from '../queries/data-identity.ts';
import { withDatabase } from './store-client.ts';

export type { LedgerEntry };

/** What a result gives the ledger, with the identity of the data it read (dataIdentityOf). */
export interface LedgerInput extends CoreLedgerInput {
  data?: string;
}

export function appendLedger(file: string, database: string, result: LedgerInput): LedgerEntry {
  const entry = ledgerEntry(result, database, result.data ?? '', new Date().toISOString());
  appendFileSync(file, JSON.stringify(entry) + '\n');
  return entry;
}

/**
 * Appends as appendLedger does, or returns why it could not (a read-only folder, a full disk):
 * the analysis's result is written already, and the command says so in one line.
 */
export function tryAppendLedger(file: string, database: string, result: Parameters<typeof appendLedger>[2]): string | null {
  try {
    appendLedger(file, database, result);
    return null;
  } catch (e) {
    const err = e as NodeJS.ErrnoException;
    if (typeof err.code !== 'string') throw e;
    const what = result.kind === 'report' ? 'report' : 'analysis';
    return `warning: the ledger ${file} cannot be written (${err.code}): this ${what} is not recorded in it${what === 'analysis' ? ', so reports will not count it' : ''}; everything else is written`;
  }
}

export function readLedger(file: string): LedgerEntry[] {
  if (!existsSync(file)) return [];
  return readFileSync(file, 'utf8')
    .split('\n')
    .filter(Boolean)
    .map((l, i) => {
      try {
        return JSON.parse(l) as LedgerEntry;
      } catch {
        throw new Error(`${file}: line ${i + 1} is not a ledger entry`);
      }
    });
}

/** The identity of the data of one ingest run of a database file (the ledger's `data`). */
export async function dataIdentityOf(dbPath: string, runId: string): Promise<string> {
  return withDatabase(dbPath, (db) => runDataIdentity(db, runId));
}
