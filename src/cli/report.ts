/**
 * `bandwise report <result.json> --out methods.md [--json parameters.json] [--database db] [--ledger file]`
 * Writes the methods text of a saved compare or band-check result, with every parameter, from the
 * result and (when the database is at hand) the facts stored in it.
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import { methodsReport, type ReportableResult } from '../core/report/index.ts';
import { databaseFactsOf, ledgerCountsOf } from '../analysis/report-facts.ts';
import { appendLedger } from '../analysis/ledger.ts';
import { reportUserError } from './user-errors.ts';

interface ReportFlags {
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

export async function writeReport(resultFile: string, flags: ReportFlags): Promise<{ markdown: string; jsonFile: string; database: string | null; ledger: string | null }> {
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

export function register(program: Command): void {
  program
    .command('report')
    .summary('write the methods text (Markdown) and its parameters (JSON) for a saved result')
    .description(
      'Writes the methods of a compare or band-check result in plain scientific English: spectral parameters ' +
        '(window, segment, overlap, averaging, frequency resolution, references), epoch rejection rules with the share ' +
        'rejected, the aperiodic model and fit range, exclusions with reasons, design, statistic, correction, threshold, ' +
        'permutations and seed, the ledger counts, and the references of the methods used; plus a JSON of the parameters.',
    )
    .argument('<result>', 'result JSON written by `bandwise compare` or `bandwise band-check`')
    .requiredOption('--out <file>', 'methods text to write (Markdown)')
    .option('--json <file>', 'parameters JSON to write (default: the --out name with .json)')
    .option('--database <file>', 'the database the result came from (default: the result\'s database file, if it lies beside the result)')
    .option('--ledger <file>', 'ledger file to count analyses from (default: <database>.ledger.jsonl)')
    .option('--no-ledger', 'neither count nor record in a ledger')
    .option('--run <id>', 'ingest run (default: the result\'s run)')
    .action(async (resultFile: string, flags: ReportFlags) => {
      try {
        const r = await writeReport(resultFile, flags);
        console.log(`wrote ${flags.out} and ${r.jsonFile}${r.database ? '' : ' (no database: spectral facts from the result only)'}`);
      } catch (e) {
        if (e instanceof ReportFileError) {
          console.error(e.message);
          process.exitCode = 2;
          return;
        }
        if (reportUserError('report', e)) return;
        throw e;
      }
    });
}
