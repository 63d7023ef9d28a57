/**
 * The ledger: every contrast and band check run on a database, one JSON line each (settings,
 * time, smallest p), so a report can state how many analyses were tried and how many were
 * significant. Trying many analysis variants inflates false positives; the ledger makes it visible.
 */
import { appendFileSync, existsSync, readFileSync } from 'node:fs';
import type { Part } from '../core/confirmation/split.ts';

export interface LedgerEntry {
  time: string;
  database: string;
  kind: string;
  contrast: unknown;
  /** smallest corrected p of the analysis (null when it has none) */
  p: number | null;
  significant: boolean;
  /** while a split exists: the part of the subjects the analysis used, and the split's id */
  part?: Part;
  splitId?: string;
  /** a confirmation: the plan and which confirmation of it this was */
  planId?: string;
  confirmationRun?: number;
  /** split and lock events: what was made (never a group's real name or code) */
  details?: Record<string, unknown>;
}

/** What an analysis result (or a split or lock event) gives the ledger. */
export interface LedgerInput {
  kind: string;
  contrast: unknown;
  clusters?: { p: number }[];
  verdict?: string;
  p?: number | null;
  part?: Part;
  split?: { id: string };
  plan?: { id: string; confirmationRun: number };
  details?: Record<string, unknown>;
}

export function appendLedger(file: string, database: string, result: LedgerInput): LedgerEntry {
  const ps = (result.clusters ?? []).map((k) => k.p);
  const p = result.p ?? (ps.length > 0 ? Math.min(...ps) : null);
  const entry: LedgerEntry = {
    time: new Date().toISOString(),
    database: database.split(/[\\/]/).pop()!,
    kind: result.kind,
    contrast: result.contrast,
    p,
    significant: p !== null && p < 0.05,
  };
  if (result.part && result.split) Object.assign(entry, { part: result.part, splitId: result.split.id });
  if (result.plan) Object.assign(entry, { planId: result.plan.id, confirmationRun: result.plan.confirmationRun });
  if (result.details) entry.details = result.details;
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
