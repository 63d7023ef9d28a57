// The open database's exclusion list (browser storage, db/local-store.ts) and its ledger: the one
// beside the database when the dashboard server keeps it (db/shared-ledger.ts; this browser's
// earlier lines are merged into it), else this browser's own, and the views say which.
import type { Exclusion } from '../../core/contrast/data.ts';
import { exclusionsToTsv, parseExclusionsTsv } from '../../core/contrast/exclusions.ts';
import { ledgerCounts, ledgerEntry, type LedgerEntry, type LedgerInput } from '../../core/report/ledger.ts';
import type { SqlClient } from '../../queries/client.ts';
import { runDataIdentity } from '../../queries/data-identity.ts';
import { chooseRun, type RunInfo } from '../../queries/runs.ts';
import { appendLedger, saveLedger, databaseKey, loadExclusions, loadLedger, saveExclusions, withExclusion, withoutExclusion } from './local-store.ts';
import { postSharedLedger, readSharedLedger, sharedLedgerUrl } from './shared-ledger.ts';

export class DatabaseNotes {
  key: string | null = $state(null);
  exclusions: Exclusion[] = $state.raw([]);
  ledger: LedgerEntry[] = $state.raw([]);
  /** the database's file name, as its ledger lines name it */
  name = $state('');
  /** true while the ledger shown is the one beside the database (shared with the command line) */
  shared = $state(false);
  /** The ledger's distinct analyses and significant ones, as every view and the methods report state them. */
  readonly counts = $derived(ledgerCounts(this.ledger, this.name));
  /** the identity of the data the analyses read (src/core/report/ledger.ts dataIdentity) */
  private data: Promise<string> = Promise.resolve('');
  private ledgerUrl: string | null = null;
  /** the database whose ledger is being joined, null when none */
  private joining: string | null = null;

  /** Point at the database just opened and read its lists. */
  use(runs: readonly RunInfo[], db: SqlClient & { source: string; name: string }): void {
    // a database read again (session.svelte.ts adds ?read=N to its address) keeps its lists
    this.key = databaseKey(runs, db.source.replace(/\?read=\d+$/, ''));
    this.name = db.name;
    this.exclusions = loadExclusions(localStorage, this.key);
    this.ledger = loadLedger(localStorage, this.key, db.name);
    this.shared = false;
    this.ledgerUrl = null;
    this.data = runs.length > 0 ? runDataIdentity(db, chooseRun(runs).runId) : Promise.resolve('');
    void this.joinShared(this.key, sharedLedgerUrl(db.source));
  }

  /** Reads the ledger beside the database and posts this browser's lines to it; they then leave this browser. */
  private async joinShared(key: string, url: string | null): Promise<void> {
    // one join at a time per database: two would post this browser's lines twice
    if (url === null || this.joining === key) return;
    this.joining = key;
    try {
      await this.join(key, url);
    } finally {
      if (this.joining === key) this.joining = null;
    }
  }

  private async join(key: string, url: string): Promise<void> {
    const lines = await readSharedLedger(url);
    if (lines === null || key !== this.key) return;
    // this browser's own lines are those in its storage, never lines read from the server
    const own = loadLedger(localStorage, key, this.name);
    for (const e of own) if (!(await postSharedLedger(url, e))) return;
    if (key !== this.key) return;
    // lines recorded meanwhile stay in this browser until the next open
    const posted = own.map((e) => JSON.stringify(e));
    const meanwhile = loadLedger(localStorage, key, this.name).filter((e) => !posted.includes(JSON.stringify(e)));
    saveLedger(localStorage, key, meanwhile);
    this.ledgerUrl = url;
    this.shared = meanwhile.length === 0;
    this.ledger = [...lines, ...own, ...meanwhile];
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

  /** Records an analysis: in the ledger beside the database, or (when it cannot be written) in this browser's. */
  async record(input: LedgerInput): Promise<void> {
    const key = this.requireKey();
    const entry = ledgerEntry(input, this.name, await this.data.catch(() => ''));
    if (key !== this.key) return;
    if (this.ledgerUrl !== null && (await postSharedLedger(this.ledgerUrl, entry))) {
      this.ledger = [...this.ledger, entry];
      return;
    }
    // kept in this browser; merged into the ledger beside the database at the next open
    appendLedger(localStorage, key, entry);
    this.shared = false;
    this.ledger = [...this.ledger, entry];
  }

  /** Whether a subject (whole, or this channel) is on the list. */
  excluded(subject: string, channel: string | null): Exclusion | undefined {
    return this.exclusions.find((e) => e.subject === subject && (e.channel === null || e.channel === channel));
  }
}

export const notes = new DatabaseNotes();
