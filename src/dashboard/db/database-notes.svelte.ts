// The open database's exclusion list and contrast ledger, kept in browser storage
// (db/local-store.ts) and shared by the quality screen and every contrast.
import type { Exclusion } from '../../core/contrast/data.ts';
import { exclusionsToTsv, parseExclusionsTsv } from '../../core/contrast/exclusions.ts';
import { appendLedger, databaseKey, loadExclusions, loadLedger, saveExclusions, withExclusion, withoutExclusion, type LedgerEntry } from './local-store.ts';
import { browserLedgerCounts } from './ledger-report.ts';
import type { RunInfo } from '../../queries/runs.ts';

export class DatabaseNotes {
  key: string | null = $state(null);
  exclusions: Exclusion[] = $state.raw([]);
  ledger: LedgerEntry[] = $state.raw([]);
  /** The ledger's analyses and significant ones, as every view and the methods report state them. */
  readonly counts = $derived(browserLedgerCounts(this.ledger));

  /** Point at the database just opened and read its lists. */
  use(runs: readonly RunInfo[], source: string): void {
    this.key = databaseKey(runs, source);
    this.exclusions = loadExclusions(localStorage, this.key);
    this.ledger = loadLedger(localStorage, this.key);
  }

  private requireKey(): string {
    if (this.key === null) throw new Error('no database is open');
    return this.key;
  }

  exclude(e: Exclusion): void {
    this.exclusions = withExclusion(this.exclusions, e);
    saveExclusions(localStorage, this.requireKey(), this.exclusions);
  }

  include(subject: string, channel: string | null): void {
    this.exclusions = withoutExclusion(this.exclusions, subject, channel);
    saveExclusions(localStorage, this.requireKey(), this.exclusions);
  }

  toTsv(): string {
    return exclusionsToTsv(this.exclusions);
  }

  /** Replace the list by an imported TSV (src/core/contrast/exclusions.ts format). */
  importTsv(text: string, fileName: string): void {
    let list: Exclusion[] = [];
    for (const e of parseExclusionsTsv(text, fileName)) list = withExclusion(list, e);
    this.exclusions = list;
    saveExclusions(localStorage, this.requireKey(), this.exclusions);
  }

  record(entry: LedgerEntry): void {
    this.ledger = appendLedger(localStorage, this.requireKey(), entry);
  }

  /** Whether a subject (whole, or this channel) is on the list. */
  excluded(subject: string, channel: string | null): Exclusion | undefined {
    return this.exclusions.find((e) => e.subject === subject && (e.channel === null || e.channel === channel));
  }
}

export const notes = new DatabaseNotes();
