/**
 * The ledger's entries and how they are counted. One ledger per database (a JSON-lines file beside
 * it, written by the command line and, through the dashboard server, by the browser). An analysis
 * is known by its identity: a hash of its kind, its normalised contrast (exclusions included,
 * their reasons not), the split part it used and the data it read. Running the same analysis again
 * (a page reload, the same contrast twice on the command line) adds a line but no analysis; a
 * robustness run adds one analysis per path it tried.
 */

/** The subjects' part of a split an analysis used. */
export type LedgerPart = 'exploration' | 'confirmation';

/** One path of a robustness run: its identity and its p (null when it has none). */
export interface LedgerPath {
  key: string;
  p: number | null;
}

export interface LedgerEntry {
  time: string;
  /** the database's file name (base name) */
  database: string;
  /** compare, band-check, robustness (analyses); report, split, lock, … (events, not counted) */
  kind: string;
  contrast: unknown;
  /** smallest corrected p of the analysis (null when it has none) */
  p: number | null;
  significant: boolean;
  /** the analysis's identity (analysisKey); absent in lines written before identities were kept */
  key?: string;
  /** a robustness run: every path it tried */
  paths?: LedgerPath[];
  /** while a split exists: the part of the subjects the analysis used, and the split's id */
  part?: LedgerPart;
  splitId?: string;
  /** a confirmation: the plan and which confirmation of it this was */
  planId?: string;
  confirmationRun?: number;
  /** split and lock events: what was made (never a group's real name or code) */
  details?: Record<string, unknown>;
}

export interface LedgerCounts {
  /** distinct analyses (compare, band check, each path of a robustness run) recorded for this database */
  analyses: number;
  /** distinct analyses with p < 0.05 */
  significant: number;
  /** distinct analyses by kind (a robustness run's paths under 'robustness') */
  byKind: Record<string, number>;
  /** runs that repeated an analysis already counted (not counted again) */
  repeats: number;
  /** the counts are one browser's own (the ledger beside the database could not be reached) */
  browserOnly?: boolean;
}

/** The kinds of entry that are analyses. */
export const ANALYSIS_KINDS: readonly string[] = ['compare', 'band-check', 'robustness'];

/** JSON with object keys sorted at every level and undefined members left out. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(sortKeys(value));
}

function sortKeys(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(sortKeys);
  if (value !== null && typeof value === 'object') {
    const out: Record<string, unknown> = {};
    for (const k of Object.keys(value).sort()) {
      const v = (value as Record<string, unknown>)[k];
      if (v !== undefined) out[k] = sortKeys(v);
    }
    return out;
  }
  return value;
}

const FNV_OFFSET = 0xcbf29ce484222325n;
const FNV_PRIME = 0x100000001b3n;
const MASK_64 = (1n << 64n) - 1n;

/** FNV-1a, 64 bits, over the UTF-8 bytes of the text, as 16 hex digits (Fowler, Noll & Vo; IETF draft-eastlake-fnv). */
export function fnv1a64(text: string): string {
  let h = FNV_OFFSET;
  for (const byte of new TextEncoder().encode(text)) {
    // h = (h XOR byte) × prime mod 2⁶⁴
    h = ((h ^ BigInt(byte)) * FNV_PRIME) & MASK_64;
  }
  return h.toString(16).padStart(16, '0');
}

/** The identity of the data an analysis reads: the ingest run and its recordings (any order). */
export function dataIdentity(runId: string, recordingIds: readonly string[]): string {
  return fnv1a64([runId, ...[...recordingIds].sort()].join('\n'));
}

/** A contrast as its identity sees it: exclusions as (subject, channel, stage), sorted, without their reasons. */
export function normalisedContrast(contrast: unknown): unknown {
  if (contrast === null || typeof contrast !== 'object' || Array.isArray(contrast)) return contrast;
  const c = contrast as Record<string, unknown>;
  if (!Array.isArray(c.exclusions)) return c;
  const seen = new Set<string>();
  for (const e of c.exclusions as Record<string, unknown>[]) {
    seen.add(JSON.stringify([e.subject, e.channel ?? null, e.stage ?? null]));
  }
  return { ...c, exclusions: [...seen].sort().map((s) => JSON.parse(s) as unknown) };
}

/** An analysis's identity: same kind, same contrast (normalised), same part, same data → same key. */
export function analysisKey(kind: string, contrast: unknown, part: LedgerPart | null, data: string): string {
  return fnv1a64(canonicalJson({ kind, contrast: normalisedContrast(contrast), part, data }));
}

/** What an analysis result (or a split or lock event) gives the ledger. */
export interface LedgerInput {
  kind: string;
  contrast: unknown;
  clusters?: readonly { p: number }[];
  p?: number | null;
  part?: LedgerPart;
  split?: { id: string };
  plan?: { id: string; confirmationRun: number };
  details?: Record<string, unknown>;
  /** a robustness run: the contrast of each path tried (its choices included) and its p */
  paths?: readonly { contrast: unknown; p: number | null }[];
}

/**
 * The line an analysis adds to the ledger of `database` (its file name): smallest p, whether it
 * is below 0.05, and for analyses their identity over `data` (dataIdentity) — the same for the
 * command line and the browser.
 */
export function ledgerEntry(input: LedgerInput, database: string, data: string, time = new Date().toISOString()): LedgerEntry {
  const ps = (input.clusters ?? []).map((k) => k.p);
  const p = input.p ?? (ps.length > 0 ? Math.min(...ps) : null);
  const entry: LedgerEntry = {
    time,
    database: database.split(/[\\/]/).pop()!,
    kind: input.kind,
    contrast: input.contrast,
    p,
    significant: p !== null && p < 0.05,
  };
  const part = input.part ?? null;
  if (input.paths) entry.paths = input.paths.map((x) => ({ key: analysisKey('robustness', x.contrast, part, data), p: x.p }));
  else if (ANALYSIS_KINDS.includes(input.kind)) entry.key = analysisKey(input.kind, input.contrast, part, data);
  if (input.part && input.split) Object.assign(entry, { part: input.part, splitId: input.split.id });
  if (input.plan) Object.assign(entry, { planId: input.plan.id, confirmationRun: input.plan.confirmationRun });
  if (input.details) entry.details = input.details;
  return entry;
}

/** The analyses an entry stands for: a robustness run's paths, else the entry itself. */
function analysesOf(e: LedgerEntry): { kind: string; key: string; significant: boolean }[] {
  if (e.kind === 'robustness') return (e.paths ?? []).map((p) => ({ kind: e.kind, key: p.key, significant: p.p !== null && p.p < 0.05 }));
  // a line written before identities were kept: its contrast and part stand for it
  const key = e.key ?? `old:${analysisKey(e.kind, e.contrast, e.part ?? null, '')}`;
  return [{ kind: e.kind, key, significant: e.significant }];
}

/** Counts a ledger's distinct analyses for one database file name (reports, splits and locks are not analyses). */
export function ledgerCounts(entries: readonly LedgerEntry[], database: string): LedgerCounts {
  const seen = new Map<string, { kind: string; significant: boolean }>();
  let runs = 0;
  for (const e of entries) {
    if (e.database !== database || !ANALYSIS_KINDS.includes(e.kind)) continue;
    for (const a of analysesOf(e)) {
      runs++;
      const before = seen.get(a.key);
      seen.set(a.key, { kind: a.kind, significant: (before?.significant ?? false) || a.significant });
    }
  }
  const byKind: Record<string, number> = {};
  let significant = 0;
  for (const a of seen.values()) {
    byKind[a.kind] = (byKind[a.kind] ?? 0) + 1;
    if (a.significant) significant++;
  }
  return { analyses: seen.size, significant, byKind, repeats: runs - seen.size };
}
