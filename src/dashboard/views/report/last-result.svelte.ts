// The last result run in this tab (a band check, or a contrast its view hands over) or loaded
// from a file, for the methods report. Saved in the tab's session storage (sessionStorage) under
// the hash of its contrast, so a reload shows the same result and methods text; the storage holds
// one result at a time.
import type { ReportableResult } from '../../../core/report/index.ts';

export type ResultDatabase = NonNullable<ReportableResult['database']>;

/** sessionStorage in the app; any Storage in tests. */
export interface ResultStore {
  getItem(key: string): string | null;
  setItem(key: string, value: string): void;
  removeItem(key: string): void;
}

/** Where the saved result's hash and origin are kept. */
export const LAST_RESULT_KEY = 'bandwise:last-result';

/** FNV-1a 32-bit hash of a text, 8 hex digits (Fowler–Noll–Vo; offset basis 2166136261, prime 16777619). */
export function textHash(text: string): string {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) h = Math.imul(h ^ text.charCodeAt(i), 0x01000193) >>> 0;
  return h.toString(16).padStart(8, '0');
}

/** The storage key of a result: its kind and the hash of its contrast JSON. */
export function resultKey(r: ReportableResult): string {
  return `bandwise:result:${r.kind}:${textHash(JSON.stringify(r.contrast))}`;
}

type Origin = 'session' | 'file';

export class LastResult {
  result: ReportableResult | null = $state.raw(null);
  /** what the figures of the report should show ('session' runs keep their figure data) */
  origin: Origin | null = $state(null);
  /** why the result could not be saved for a reload (too large for the storage), null when saved */
  saveError: string | null = $state(null);
  private readonly store: ResultStore | null;

  constructor(store: ResultStore | null = typeof sessionStorage === 'undefined' ? null : sessionStorage) {
    this.store = store;
    this.restore();
  }

  remember(result: ReportableResult, origin: Origin = 'session'): void {
    this.result = result;
    this.origin = origin;
    this.save(result, origin);
  }

  private save(result: ReportableResult, origin: Origin): void {
    if (this.store === null) return;
    const key = resultKey(result);
    const before = this.pointer();
    try {
      if (before && before.key !== key) this.store.removeItem(before.key);
      this.store.setItem(key, JSON.stringify(result));
      this.store.setItem(LAST_RESULT_KEY, JSON.stringify({ key, origin }));
      this.saveError = null;
    } catch (err) {
      this.store.removeItem(key);
      this.store.removeItem(LAST_RESULT_KEY);
      this.saveError = `the result is kept until the page is reloaded, not after (${err instanceof Error ? err.message : String(err)})`;
    }
  }

  private pointer(): { key: string; origin: Origin } | null {
    const text = this.store?.getItem(LAST_RESULT_KEY) ?? null;
    if (text === null) return null;
    try {
      const p = JSON.parse(text) as { key?: unknown; origin?: unknown };
      return typeof p.key === 'string' && (p.origin === 'session' || p.origin === 'file') ? { key: p.key, origin: p.origin } : null;
    } catch {
      return null;
    }
  }

  /** The saved result, when the storage holds one that reads back (a damaged entry is dropped). */
  private restore(): void {
    const p = this.pointer();
    const text = p ? (this.store?.getItem(p.key) ?? null) : null;
    if (p === null || text === null) return;
    try {
      const r = JSON.parse(text) as ReportableResult;
      if ((r.kind === 'compare' || r.kind === 'band-check') && resultKey(r) === p.key) {
        this.result = r;
        this.origin = p.origin;
        return;
      }
    } catch {
      // falls through: dropped below
    }
    this.store?.removeItem(p.key);
    this.store?.removeItem(LAST_RESULT_KEY);
  }
}

export const lastResult = new LastResult();
