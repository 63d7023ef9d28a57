/**
 * `bandwise report <result.json> --out methods.md [--json parameters.json] [--database db] [--ledger file] [--short]`
 * Writes the methods text of a saved compare or band-check result, with every parameter, from the
 * result and (when the database is at hand) the facts stored in it.
 */
import type { Command } from 'commander';
import type { ReportOptions } from '../analysis/write-report.ts';

export function register(program: Command): void {
  program
    .command('report')
    .description(
      'Writes the methods of a compare or band-check result in plain scientific English: spectral parameters ' +
        '(window, segment, overlap, averaging, frequency resolution, references), epoch rejection rules with the share ' +
        'rejected, the aperiodic model and fit range, exclusions with reasons, design, statistic, correction, threshold, ' +
        'permutations and seed, the ledger counts, and the references of the methods used; plus a JSON of the parameters. ' +
        'With --short it prints a paragraph of about 200–300 words to paste into a paper (data, spectra, statistics with every parameter, and the significant findings only).',
    )
    .argument('<result>', 'result JSON written by `bandwise compare` or `bandwise band-check`')
    .option('--out <file>', 'methods text to write (Markdown); needed unless --short')
    .option('--short', 'print the short methods paragraph on standard output (with --out, the full text is written too)')
    .option('--json <file>', 'parameters JSON to write (default: the --out name with .json)')
    .option('--database <file>', "the database the result came from (default: the result's database file, if it lies beside the result)")
    .option('--ledger <file>', 'ledger file to count analyses from (default: <database>.ledger.jsonl)')
    .option('--no-ledger', 'neither count nor record in a ledger')
    .option('--run <id>', "ingest run (default: the result's run)")
    .action(async (resultFile: string, flags: ReportOptions) => {
      // loaded on use: `bandwise --help` reads none of the analysis code
      const { ReportFileError, shortReport, writeReport } = await import('../analysis/write-report.ts');
      const { reportUserError } = await import('./user-errors.ts');
      try {
        if (flags.out === undefined && !flags.short)
          throw new ReportFileError('bandwise report: give --out <file> for the methods text, or --short to print the short paragraph');
        if (flags.short) process.stdout.write(await shortReport(resultFile, flags));
        if (flags.out === undefined) return;
        const r = await writeReport(resultFile, { ...flags, out: flags.out });
        // with --short, standard output holds the paragraph alone
        (flags.short ? console.error : console.log)(
          `wrote ${flags.out} and ${r.jsonFile}${r.database ? '' : ' (no database: spectral facts from the result only)'}`,
        );
        if (r.ledgerWarning) console.error(`bandwise report: ${r.ledgerWarning}`);
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
