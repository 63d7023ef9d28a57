// The browser ledger (db/local-store.ts, one list per database) as the methods report counts it
// (src/core/report ledgerCounts): the one count every view shows; and the ledger entries of a
// contrast and a band check. Entries without a kind (written before kinds were recorded) are
// contrasts ('compare', as the command line calls them).
import { ledgerCounts as reportCounts, type LedgerCounts } from '../../core/report/index.ts';
import type { CompareResult } from '../../core/contrast/run.ts';
import type { BandCheckResult } from '../../core/verdict/index.ts';
import type { LedgerEntry } from './local-store.ts';

/** A ledger entry with the kind of analysis it records. */
export type KindedLedgerEntry = LedgerEntry & { kind: 'compare' | 'band-check' };

/** The kind of a browser ledger entry: its own, else 'compare'. */
export function entryKind(e: LedgerEntry): string {
  const k = (e as { kind?: unknown }).kind;
  return typeof k === 'string' ? k : 'compare';
}

/** Ledger counts of one database's browser ledger, as the methods report states them (significant: p < 0.05). */
export function browserLedgerCounts(entries: readonly LedgerEntry[]): LedgerCounts {
  const here = 'this database';
  return reportCounts(
    entries.map((e) => ({ database: here, kind: entryKind(e), significant: e.smallestP !== null && e.smallestP < 0.05 })),
    here,
  );
}

/** The ledger entry of a band check: its contrast with the band, the verdict's smallest adjusted p (as the command line). */
export function bandCheckLedgerEntry(r: BandCheckResult, exclusions: number, time = new Date().toISOString()): KindedLedgerEntry {
  return { time, kind: 'band-check', contrast: { ...r.contrast, band: r.band }, smallestP: r.p, n: { ...r.n }, exclusions };
}

/** The ledger entry of a contrast: its contrast JSON and smallest cluster (or TFCE) p. */
export function contrastLedgerEntry(r: CompareResult, smallestP: number | null, exclusions: number, time = new Date().toISOString()): KindedLedgerEntry {
  return { time, kind: 'compare', contrast: r.contrast, smallestP, n: { ...r.n }, exclusions };
}
