// What the dashboard keeps in browser storage, per database: the exclusion list of the quality
// screen and, while the ledger beside the database cannot be reached, this browser's own ledger.
// A database is known by its ingest run ids (runs.run_id is a hash of the run's parameters) and
// its file name, so two different files never share a list.
import type { Exclusion } from '../../core/contrast/data.ts';
import type { LedgerEntry } from '../../core/report/ledger.ts';
import type { RunInfo } from '../../queries/runs.ts';

/** The key prefix of one database's entries. */
export function databaseKey(runs: readonly RunInfo[], source: string): string {
  const ids =
    runs
      .map((r) => r.runId)
      .sort()
      .join('+') || 'no-run';
  return `bandwise:${ids}:${source.split('/').pop() ?? source}`;
}

/** Minimal Storage interface (window.localStorage in the app, a Map in tests). */
export interface KeyValueStore {
  getItem(key: string): string | null;
  setItem(key: string, value: string): void;
}

function readJson<T>(store: KeyValueStore, key: string, check: (v: unknown) => v is T, fallback: T): T {
  const text = store.getItem(key);
  if (text === null) return fallback;
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw new Error(`browser storage ${key} is not valid JSON`);
  }
  if (!check(value)) throw new Error(`browser storage ${key} does not hold the expected list`);
  return value;
}

function isExclusionList(v: unknown): v is Exclusion[] {
  return (
    Array.isArray(v) &&
    v.every(
      (e) =>
        e !== null &&
        typeof e === 'object' &&
        typeof (e as Exclusion).subject === 'string' &&
        ((e as Exclusion).channel === null || typeof (e as Exclusion).channel === 'string') &&
        typeof (e as Exclusion).reason === 'string',
    )
  );
}

export function loadExclusions(store: KeyValueStore, dbKey: string): Exclusion[] {
  return readJson(store, `${dbKey}:exclusions`, isExclusionList, []);
}

export function saveExclusions(store: KeyValueStore, dbKey: string, list: readonly Exclusion[]): void {
  store.setItem(`${dbKey}:exclusions`, JSON.stringify(list));
}

/** Add an exclusion; one entry per subject × channel (a later reason replaces the earlier one). */
export function withExclusion(list: readonly Exclusion[], e: Exclusion): Exclusion[] {
  const subject = e.subject.trim();
  if (subject === '') throw new Error('an exclusion needs a subject');
  const reason = e.reason.trim() || 'no reason given';
  const rest = list.filter((x) => !(x.subject === subject && x.channel === e.channel));
  return [...rest, { subject, channel: e.channel, reason }].sort(
    (a, b) => a.subject.localeCompare(b.subject) || (a.channel ?? '').localeCompare(b.channel ?? ''),
  );
}

export function withoutExclusion(list: readonly Exclusion[], subject: string, channel: string | null): Exclusion[] {
  return list.filter((x) => !(x.subject === subject && x.channel === channel));
}

/** A line of this browser's own ledger: the ledger's (src/core/report/ledger.ts), or one kept before identities were (smallestP, no kind). */
interface OlderEntry {
  time: string;
  contrast: unknown;
  smallestP: number | null;
  kind?: string;
}

function isLedger(v: unknown): v is (LedgerEntry | OlderEntry)[] {
  return Array.isArray(v) && v.every((e) => e !== null && typeof e === 'object' && typeof (e as LedgerEntry).time === 'string');
}

/** A line kept before the browser wrote the ledger's own lines: a contrast unless it says otherwise. */
function upgraded(e: LedgerEntry | OlderEntry, database: string): LedgerEntry {
  if ('p' in e) return e;
  const p = e.smallestP;
  return { time: e.time, database, kind: e.kind ?? 'compare', contrast: e.contrast, p, significant: p !== null && p < 0.05 };
}

/** This browser's ledger of one database (`database`: its file name, which older lines did not record). */
export function loadLedger(store: KeyValueStore, dbKey: string, database: string): LedgerEntry[] {
  return readJson(store, `${dbKey}:ledger`, isLedger, []).map((e) => upgraded(e, database));
}

export function appendLedger(store: KeyValueStore, dbKey: string, entry: LedgerEntry): LedgerEntry[] {
  const list = [...loadLedger(store, dbKey, entry.database), entry];
  store.setItem(`${dbKey}:ledger`, JSON.stringify(list));
  return list;
}

/** Replaces this browser's ledger of a database (emptied once its lines are in the ledger beside the database). */
export function saveLedger(store: KeyValueStore, dbKey: string, list: readonly LedgerEntry[]): void {
  store.setItem(`${dbKey}:ledger`, JSON.stringify(list));
}
