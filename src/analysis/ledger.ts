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
