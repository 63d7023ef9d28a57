/**
 * The methods text of a saved compare or band-check result: read the result, gather the facts of
 * its database and the ledger counts when they are at hand, write the Markdown and the parameters
 * JSON, and record the report in the ledger.
 */
import { existsSync } from 'node:fs';
import path from 'node:path';
import { methodsReport, shortMethods, type ReportableResult } from '../core/report/index.ts';
import { databaseFactsOf, ledgerCountsOf } from './report-facts.ts';
import { tryAppendLedger } from './ledger.ts';
import { readSmallText } from '../files/input-files.ts';
import { refuseClashes, writeFileReplacing } from '../files/output-files.ts';

export interface ReportOptions {
  /** the full methods text (Markdown); needed unless `short` */
  out?: string;
  /** print the short methods paragraph on standard output */
  short?: boolean;
  json?: string;
  database?: string;
  ledger?: string | false;
  run?: string;
}

export class ReportFileError extends Error {
  override name = 'ReportFileError';
}

/** Reads a result JSON written by compare or band-check; fails naming the file and the problem. */
export function readResult(file: string): ReportableResult {
  let value: unknown;
  const text = readSmallText(file, 'the result');
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw new ReportFileError(`${file}: cannot be read as JSON (${(e as Error).message})`);
  }
  const kind = (value as { kind?: unknown })?.kind;
  if (kind !== 'compare' && kind !== 'band-check')
    throw new ReportFileError(`${file}: "kind" is ${JSON.stringify(kind)}, expected "compare" or "band-check" (a result of bandwise compare or band-check)`);
  if (typeof (value as { contrast?: unknown }).contrast !== 'object') throw new ReportFileError(`${file}: no "contrast" object`);
  return value as ReportableResult;
}

/** The database of a result: the one given, or the result's database file beside the result. */
function databaseFor(resultFile: string, r: ReportableResult, given?: string): string | null {
  if (given) return given;
  const name = r.database?.file;
  if (!name) return null;
  const beside = path.join(path.dirname(resultFile), name);
  return existsSync(beside) ? beside : null;
}

/** The short methods paragraph of a saved result, with its database's facts and the ledger counts when at hand (nothing written or recorded). */
export async function shortReport(resultFile: string, flags: Omit<ReportOptions, 'out' | 'json'>): Promise<string> {
  const result = readResult(resultFile);
  const db = databaseFor(resultFile, result, flags.database);
  const ledgerFile = flags.ledger === false ? null : (flags.ledger ?? (db ? `${db}.ledger.jsonl` : null));
  const facts = db ? await databaseFactsOf(db, result.contrast, flags.run ?? result.database?.runId) : null;
  const dbName = (db ?? result.database?.file ?? '').split(/[\\/]/).pop()!;
  const ledger = ledgerFile && existsSync(ledgerFile) ? ledgerCountsOf(ledgerFile, dbName) : null;
  return shortMethods(result, facts, ledger);
}

/**
 * Reads the result (and its database and ledger when at hand), refuses outputs that would destroy
 * an input or each other (OutputClashError, before anything is written), writes the methods text
 * and the parameters JSON, and records the report in the ledger (ledgerWarning when it could not).
 */
export async function writeReport(
  resultFile: string,
  flags: ReportOptions & { out: string },
): Promise<{ markdown: string; jsonFile: string; database: string | null; ledger: string | null; ledgerWarning: string | null }> {
  const result = readResult(resultFile);
  const db = databaseFor(resultFile, result, flags.database);
  const ledgerFile = flags.ledger === false ? null : (flags.ledger ?? (db ? `${db}.ledger.jsonl` : null));
  const jsonFile = flags.json ?? flags.out.replace(/\.(md|markdown)$/i, '') + '.json';
  refuseClashes(
    [{ what: 'the result', file: resultFile }, db ? { what: 'the database', file: db } : null],
    [
      ledgerFile ? { what: 'the ledger', file: ledgerFile } : null,
      { what: '--out', file: flags.out },
      { what: flags.json ? '--json' : 'the parameters JSON', file: jsonFile },
    ],
  );
  const facts = db ? await databaseFactsOf(db, result.contrast, flags.run ?? result.database?.runId) : null;
  const dbName = (db ?? result.database?.file ?? '').split(/[\\/]/).pop()!;
  const ledger = ledgerFile && existsSync(ledgerFile) ? ledgerCountsOf(ledgerFile, dbName) : null;
  const report = methodsReport(result, facts, ledger);
  writeFileReplacing(flags.out, report.markdown);
  writeFileReplacing(jsonFile, JSON.stringify(report.parameters, null, 2) + '\n');
  // recorded as kind "report": not an analysis, so the report's counts leave it out
  const ledgerWarning = ledgerFile ? tryAppendLedger(ledgerFile, dbName, { kind: 'report', contrast: result.contrast, p: null }) : null;
  return { markdown: report.markdown, jsonFile, database: db, ledger: ledgerFile, ledgerWarning };
}
