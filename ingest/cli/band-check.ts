/**
 * `bandwise band-check <cohort.duckdb> (--contrast contrast.json | options) --band LO-HI --out result.json`
 * Is a band effect band-specific, or a broadband aperiodic change seen through the band? Runs the
 * band check of src/core/verdict on the contrast's channels (averaged) and writes the verdict
 * with every effect, its interval and p, and the sentence behind it.
 */
import { writeFileSync, readFileSync } from 'node:fs';
import { Command, InvalidArgumentError } from 'commander';
import cliProgress from 'cli-progress';
import type { Contrast } from '../../src/core/contrast/spec.ts';
import type { Exclusion } from '../../src/core/contrast/data.ts';
import { parseExclusionsTsv } from '../../src/core/contrast/exclusions.ts';
import { DEFAULT_BANDS, SIGMA_PRESETS, checkBand, BandError, type Band } from '../../src/core/spectrum/bands.ts';
import { bandCheck, type BandCheckOptions, type BandCheckResult } from '../../src/core/verdict/index.ts';
import { openStore, readPeaks, type Store } from '../store/index.ts';
import { loadContrastData, type LoadedContrast } from '../compare.ts';
import { storedFitRanges } from '../report.ts';
import { appendLedger } from '../ledger.ts';
import { reportUserError } from './user-errors.ts';
import { addContrastOptions, contrastOrExit, type Flags } from './compare.ts';

/** "sigma", "12-16" or "spindles:12.5-15" → a band (named presets: DEFAULT_BANDS, SIGMA_PRESETS). */
export function parseBandArgument(text: string): Band {
  const preset = [...DEFAULT_BANDS, ...SIGMA_PRESETS].find((b) => b.name === text.trim());
  if (preset) return { ...preset };
  const m = /^\s*(?:([A-Za-z][\w-]*)\s*:)?\s*([\d.]+)\s*-\s*([\d.]+)\s*$/.exec(text);
  if (!m) throw new BandError(`invalid band '${text}' (expected LO-HI in Hz, name:LO-HI, or one of ${[...DEFAULT_BANDS, ...SIGMA_PRESETS].map((b) => b.name).join(', ')})`);
  const lo = Number(m[2]);
  const hi = Number(m[3]);
  return checkBand({ name: m[1] ?? `${lo}–${hi} Hz`, loHz: lo, hiHz: hi });
}

export interface BandCheckData extends LoadedContrast {
  fitRangeHz: [number, number];
}

/** Spectra, aperiodic fits and peaks of the contrast's stage(s), and the one fit range they share. */
export async function loadBandCheckData(store: Store, c: Contrast, exclusions: Exclusion[], runId?: string): Promise<BandCheckData> {
  const loaded = await loadContrastData(store, { ...c, measure: 'residual' }, exclusions, runId);
  const stages = c.design === 'paired' && c.stages ? [...c.stages] : [c.stage];
  const ranges: [number, number][] = [];
  for (const stage of stages) {
    const q = { runId: loaded.runId, stage, reference: c.reference, averaging: c.averaging, method: c.aperiodicMethod };
    for (const p of await readPeaks(store, q)) {
      loaded.data.peaks.push({ subject: p.subject, session: p.session, channel: p.channel, stage, centerHz: p.centerHz, height: p.height, bandwidthHz: p.bandwidthHz });
    }
    for (const r of await storedFitRanges(store, loaded.runId, stage, c.reference, c.averaging, c.aperiodicMethod)) {
      if (!ranges.some((x) => x[0] === r[0] && x[1] === r[1])) ranges.push(r);
    }
  }
  if (ranges.length === 0) throw new Error(`no aperiodic fits (${c.aperiodicMethod}) stored for ${stages.join('/')}, reference ${c.reference}, averaging ${c.averaging} in run ${loaded.runId}`);
  if (ranges.length > 1) throw new Error(`the stored aperiodic fits use different fit ranges (${ranges.map((r) => `${r[0]}–${r[1]} Hz`).join(', ')}); a band check needs one range for every subject`);
  return { ...loaded, fitRangeHz: ranges[0] };
}

export interface BandCheckRun extends BandCheckResult {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown };
}

export async function bandCheckDatabase(dbPath: string, c: Contrast, band: Band, exclusions: Exclusion[], options: Omit<BandCheckOptions, 'fitRangeHz'> = {}, runId?: string): Promise<BandCheckRun> {
  const store = await openStore(dbPath, { readOnly: true });
  try {
    const loaded = await loadBandCheckData(store, c, exclusions, runId);
    const result = bandCheck(c, band, loaded.data, { ...options, fitRangeHz: loaded.fitRangeHz });
    return { ...result, database: { file: dbPath.split(/[\\/]/).pop()!, runId: loaded.runId, toolVersion: loaded.toolVersion, ingestParameters: loaded.runParameters } };
  } finally {
    await store.close();
  }
}

interface BandFlags extends Omit<Flags, 'band'> {
  band: Band;
  out: string;
  alpha?: number;
  flankWidth?: number;
}

const positive = (name: string) => (v: string) => {
  const x = Number(v);
  if (!(Number.isFinite(x) && x > 0)) throw new InvalidArgumentError(`invalid ${name}: ${v}`);
  return x;
};

const bandArg = (v: string) => {
  try {
    return parseBandArgument(v);
  } catch (e) {
    throw new InvalidArgumentError((e as Error).message);
  }
};

export function register(program: Command): void {
  const command = program
    .command('band-check')
    .summary('is a band effect band-specific, or a broadband aperiodic change? (verdict with the numbers behind it)')
    .description(
      'For a band, a stage and the contrast\'s channels (averaged), tests with the same permutation machinery as ' +
        'compare: the raw band power, the aperiodic offset and exponent, the periodic band power (residual above the ' +
        'aperiodic fit), the centre, height and width of the highest fitted peak in the band, the flanks just below and above the band, relative power, and the frequency-wise ' +
        'cluster test; then gives a verdict (band-specific, broadband-offset, exponent-change, mixed, no-evidence) with ' +
        'the sentence that explains it. The decision rules are in the README. A research tool: results are not a diagnosis.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .requiredOption('--band <band>', 'the band: LO-HI in Hz (e.g. 12-16), name:LO-HI, or a preset (delta, theta, alpha, sigma, beta, slow-sigma, fast-sigma)', bandArg)
    .requiredOption('--out <file>', 'result JSON to write')
    .option('--alpha <a>', 'level of every test and of the verdict\'s correction (default 0.05)', positive('--alpha'))
    .option('--flank-width <hz>', 'width of each flank, Hz (default: the band\'s width)', positive('--flank-width'));
  addContrastOptions(command, { bandMeasures: false });
  command.action(async (database: string, flags: BandFlags) => {
    const contrast = contrastOrExit({ ...flags, band: undefined });
    if (!contrast) return;
    const exclusions = flags.exclusions ? parseExclusionsTsv(readFileSync(flags.exclusions, 'utf8'), flags.exclusions) : [];
    const bar = !flags.quiet && process.stderr.isTTY ? new cliProgress.SingleBar({ format: 'band check {bar} {value}/{total} tests | {step}', stream: process.stderr }, cliProgress.Presets.shades_classic) : null;
    let started = false;
    let result: BandCheckRun;
    try {
      result = await bandCheckDatabase(database, contrast, flags.band, exclusions, {
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
      }, flags.run);
    } catch (e) {
      bar?.stop();
      if (reportUserError('band-check', e)) return;
      throw e;
    }
    bar?.stop();
    writeFileSync(flags.out, JSON.stringify(result, null, 2) + '\n');
    // the ledger records the band with the contrast
    if (flags.ledger !== false) appendLedger(flags.ledger ?? `${database}.ledger.jsonl`, database, { kind: result.kind, contrast: { ...result.contrast, band: result.band }, p: result.p });
    console.log(`${result.band.name} ${result.band.loHz}–${result.band.hiHz} Hz: ${result.verdict}${result.periodicKind ? ` (${result.periodicKind})` : ''}`);
    console.log(result.sentence);
    console.log(`wrote ${flags.out}`);
  });
}
