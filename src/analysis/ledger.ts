/**
 * The ledger: every contrast and band check run on a database, one JSON line each (settings,
 * time, smallest p), so a report can state how many analyses were tried and how many were
 * significant. Trying many analysis variants inflates false positives; the ledger makes it visible.
 */
import { appendFileSync, existsSync, readFileSync } from 'node:fs';

export interface LedgerEntry {
  time: string;
  database: string;
  kind: string;
  contrast: unknown;
  /** smallest corrected p of the analysis (null when it has none) */
  p: number | null;
  significant: boolean;
}

export function appendLedger(file: string, database: string, result: { kind: string; contrast: unknown; clusters?: { p: number }[]; verdict?: string; p?: number | null }): LedgerEntry {
  const ps = (result.clusters ?? []).map((k) => k.p);
  const p = result.p ?? (ps.length > 0 ? Math.min(...ps) : null);
  const entry: LedgerEntry = { time: new Date().toISOString(), database: database.split(/[\\/]/).pop()!, kind: result.kind, contrast: result.contrast, p, significant: p !== null && p < 0.05 };
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
  return readFileSync(file, 'utf8').split('\n').filter(Boolean).map((l, i) => {
    try {
      return JSON.parse(l) as LedgerEntry;
    } catch {
      throw new Error(`${file}: line ${i + 1} is not a ledger entry`);
    }
  });
}
