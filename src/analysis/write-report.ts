/**
 * The methods text of a saved compare or band-check result: read the result, gather the facts of
 * its database and the ledger counts when they are at hand, write the Markdown and the parameters
 * JSON, and record the report in the ledger.
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { methodsReport, type ReportableResult } from '../core/report/index.ts';
import { databaseFactsOf, ledgerCountsOf } from './report-facts.ts';
import { appendLedger } from './ledger.ts';

export interface ReportOptions {
  out: string;
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
  try {
    value = JSON.parse(readFileSync(file, 'utf8'));
  } catch (e) {
    throw new ReportFileError(`${file}: cannot be read as JSON (${(e as Error).message})`);
  }
  const kind = (value as { kind?: unknown })?.kind;
  if (kind !== 'compare' && kind !== 'band-check') throw new ReportFileError(`${file}: "kind" is ${JSON.stringify(kind)}, expected "compare" or "band-check" (a result of bandwise compare or band-check)`);
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

export async function writeReport(resultFile: string, flags: ReportOptions): Promise<{ markdown: string; jsonFile: string; database: string | null; ledger: string | null }> {
  const result = readResult(resultFile);
  const db = databaseFor(resultFile, result, flags.database);
  const facts = db ? await databaseFactsOf(db, result.contrast, flags.run ?? result.database?.runId) : null;
  const ledgerFile = flags.ledger === false ? null : (flags.ledger ?? (db ? `${db}.ledger.jsonl` : null));
  const dbName = (db ?? result.database?.file ?? '').split(/[\\/]/).pop()!;
  const ledger = ledgerFile && existsSync(ledgerFile) ? ledgerCountsOf(ledgerFile, dbName) : null;
  const report = methodsReport(result, facts, ledger);
  const jsonFile = flags.json ?? flags.out.replace(/\.(md|markdown)$/i, '') + '.json';
  writeFileSync(flags.out, report.markdown);
  writeFileSync(jsonFile, JSON.stringify(report.parameters, null, 2) + '\n');
  // recorded as kind "report": not an analysis, so the report's counts leave it out
  if (ledgerFile) appendLedger(ledgerFile, dbName, { kind: 'report', contrast: result.contrast, p: null });
  return { markdown: report.markdown, jsonFile, database: db, ledger: ledgerFile };
}
