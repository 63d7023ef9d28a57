/**
 * `bandwise band-check <cohort.duckdb> (--contrast contrast.json | options) --band LO-HI --out result.json`
 * Is a band effect band-specific, or a broadband aperiodic change seen through the band? Runs the
 * band check of src/core/verdict on the contrast's channels (averaged) and writes the verdict
 * with every effect, its interval and p, and the sentence behind it.
 */
import { Command, InvalidArgumentError } from 'commander';
import { BAND_SYNTAX, parseBand } from '../core/spectrum/bands.ts';
import type { BandCheckRun } from '../analysis/band-check-runner.ts';
import { refuseClashes, writeFileReplacing } from '../files/output-files.ts';
import { addContrastOptions, contrastOrExit, inputOrExit, readExclusions, type Flags } from './contrast-options.ts';

interface BandFlags extends Omit<Flags, 'band'> {
  band: string;
  out: string;
  alpha?: number;
  flankWidth?: number;
}

const positive = (name: string) => (v: string) => {
  const x = Number(v);
  if (!(Number.isFinite(x) && x > 0)) throw new InvalidArgumentError(`invalid ${name}: ${v}`);
  return x;
};

export function register(program: Command): void {
  const command = program
    .command('band-check')
    .description(
      "For a band, a stage and the contrast's channels (averaged), tests with the same permutation machinery as " +
        'compare: the raw band power, the aperiodic offset and exponent, the periodic band power (residual above the ' +
        'aperiodic fit), the centre, height and width of the highest fitted peak in the band, the flanks just below and above the band, relative power, and the frequency-wise ' +
        'cluster test; then gives a verdict (band-specific, broadband-offset, exponent-change, mixed, no-evidence) with ' +
        'the sentence that explains it. The decision rules are in the README. A research tool: results are not a diagnosis.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .requiredOption('--band <band>', `the band: ${BAND_SYNTAX}`)
    .requiredOption('--out <file>', 'result JSON to write')
    .option('--alpha <a>', "level of every test and of the verdict's correction (default: 0.05)", positive('--alpha'))
    .option('--flank-width <hz>', "width of each flank, Hz (default: the band's width)", positive('--flank-width'));
  addContrastOptions(command, { bandMeasures: false });
  command.action(async (database: string, flags: BandFlags) => {
    if (flags.measure !== undefined) {
      console.error('bandwise band-check: --measure is not used: the band check tests its own fixed set of measures (README "band-check")');
      process.exitCode = 2;
      return;
    }
    // loaded on use: `bandwise --help` reads none of the analysis code
    const { default: cliProgress } = await import('cli-progress');
    const { withExclusions } = await import('../core/contrast/exclusions.ts');
    const { bandCheckDatabase } = await import('../analysis/band-check-runner.ts');
    const { dataIdentityOf, tryAppendLedger } = await import('../analysis/ledger.ts');
    const { reportUserError } = await import('./user-errors.ts');
    const { partLine } = await import('../core/confirmation/methods-text.ts');
    const band = inputOrExit(() => parseBand(flags.band));
    if (!band) return;
    const ledger = flags.ledger === false ? null : (flags.ledger ?? `${database}.ledger.jsonl`);
    let exclusions;
    try {
      refuseClashes(
        [
          { what: 'the database', file: database },
          flags.contrast ? { what: '--contrast', file: flags.contrast } : null,
          flags.exclusions ? { what: '--exclusions', file: flags.exclusions } : null,
        ],
        [ledger ? { what: 'the ledger', file: ledger } : null, { what: '--out', file: flags.out }],
      );
      exclusions = readExclusions(flags.exclusions);
    } catch (e) {
      if (reportUserError('band-check', e)) return;
      throw e;
    }
    const given = contrastOrExit({ ...flags, band: undefined });
    if (!given) return;
    // a TSV's exclusions join those the contrast carries, so the result's contrast reruns as it ran
    const contrast = exclusions.length ? withExclusions(given, exclusions) : given;
    const bar =
      !flags.quiet && process.stderr.isTTY
        ? new cliProgress.SingleBar({ format: 'band check {bar} {value}/{total} tests | {step}', stream: process.stderr }, cliProgress.Presets.shades_classic)
        : null;
    let started = false;
    let result: BandCheckRun;
    try {
      result = await bandCheckDatabase(
        database,
        contrast,
        band,
        [],
        {
          alpha: flags.alpha,
          flankWidthHz: flags.flankWidth,
          onProgress: (step, done, total) => {
            if (!bar) return;
            if (!started) {
              bar.start(total, 0, { step });
              started = true;
            }
            bar.update(done, { step });
          },
        },
        flags.run,
      );
    } catch (e) {
      bar?.stop();
      if (reportUserError('band-check', e)) return;
      throw e;
    }
    bar?.stop();
    try {
      writeFileReplacing(flags.out, JSON.stringify(result, null, 2) + '\n');
    } catch (e) {
      if (reportUserError('band-check', e)) return;
      throw e;
    }
    // the ledger records the band with the contrast
    const ledgerWarning = ledger
      ? tryAppendLedger(ledger, database, {
          kind: result.kind,
          contrast: { ...result.contrast, band: result.band },
          p: result.p,
          part: result.part,
          split: result.split,
          data: await dataIdentityOf(database, result.database.runId),
        })
      : null;
    console.log(`${result.band.name} ${result.band.loHz}–${result.band.hiHz} Hz: ${result.verdict}${result.periodicKind ? ` (${result.periodicKind})` : ''}`);
    console.log(result.sentence);
    if (!result.database.runFinished)
      console.log(`note: run ${result.database.runId} is unfinished (its ingest stopped before its end): the cohort may be partial`);
    const part = partLine(result);
    if (part) console.log(part);
    console.log(`wrote ${flags.out}`);
    if (ledgerWarning) console.error(`bandwise band-check: ${ledgerWarning}`);
  });
}
