// The ledger beside the database, through the dashboard server (src/server/ledger-route.ts): read
// on open, one line posted per analysis. A database picked from disk, or served without a ledger,
// has none: the browser then keeps its own (local-store.ts) and says so.
import type { LedgerEntry } from '../../core/report/ledger.ts';

/** Where the server answers with the ledger of the database served at `source`, or null when it is not served. */
export function sharedLedgerUrl(source: string): string | null {
  const m = /^(https?:\/\/.+)\/data\/cohort\.duckdb(\?read=\d+)?$/.exec(source);
  return m ? `${m[1]}/data/ledger.jsonl` : null;
}

/** The ledger's lines, or null when the server keeps none for this database. */
export async function readSharedLedger(url: string): Promise<LedgerEntry[] | null> {
  let res: Response;
  try {
    res = await fetch(url, { cache: 'no-store' });
  } catch {
    return null;
  }
  if (!res.ok) return null;
  const lines = (await res.text()).split('\n').filter((l) => l.trim() !== '');
  return lines.map((l, i) => {
    try {
      return JSON.parse(l) as LedgerEntry;
    } catch {
      throw new Error(`the ledger beside the database: line ${i + 1} is not a ledger entry`);
    }
  });
}

/** Appends one line; false when the server could not write it (the line stays in this browser). */
export async function postSharedLedger(url: string, entry: LedgerEntry): Promise<boolean> {
  try {
    const res = await fetch(url, { method: 'POST', body: JSON.stringify(entry), headers: { 'Content-Type': 'application/json' } });
    return res.ok;
  } catch {
    return false;
  }
}
