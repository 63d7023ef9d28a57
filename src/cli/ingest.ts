/**
 * `bandwise ingest <cohort.tsv|cohort.csv|bids-folder> --out cohort.duckdb …`
 *
 * Exit status: 0 every recording done or already stored; 3 some recordings failed (they are in
 * ingest_errors, the others are stored); 1 nothing could be done (bad cohort, unwritable
 * database, every recording failed) or the run had to stop (the disk holding the database is
 * full: what was stored is kept, a rerun resumes).
 */
import { availableParallelism } from 'node:os';
import { Command, InvalidArgumentError, Option } from 'commander';
import type cliProgressModule from 'cli-progress';
import { REFERENCE_KINDS, type ReferenceKind } from '../core/montage/reference.ts';
import { COORDINATE_UNITS, type CoordinateUnit } from '../core/montage/electrodes-file.ts';
import { BAND_SYNTAX, parseBand } from '../core/spectrum/bands.ts';
import { defaultTaperCount } from '../core/spectrum/multitaper.ts';
import { readLabelMap } from '../../ingest/hypnogram/label-map.ts';
import type { IngestEvent } from '../../ingest/run.ts';
import { DEFAULT_INGEST_PARAMS, type IngestParams } from '../../ingest/pipeline.ts';
import { OutputClashError } from '../files/output-files.ts';
import { DEFAULT_FILE_NAME_FORM, FILE_NAME_FORMS, type FileNameForm } from '../../ingest/file-names.ts';

export const EXIT_OK = 0;
export const EXIT_FATAL = 1;
/** --out is the cohort table, a recording or a scoring file: refused, nothing written. */
export const EXIT_OUTPUT_REFUSED = 2;
/** Interrupted (128 + signal number): 130 Ctrl-C (SIGINT), 143 SIGTERM; what was stored is kept, a rerun resumes. */
export const EXIT_INTERRUPTED = { SIGINT: 130, SIGTERM: 143 } as const;
export const EXIT_PARTLY_FAILED = 3;

const D = DEFAULT_INGEST_PARAMS;
/** Failures listed on the terminal at the end (all of them are in ingest_errors). */
const LISTED_FAILURES = 50;
const num = (name: string, check: (x: number) => boolean) => (v: string) => {
  const x = Number(v);
  if (!Number.isFinite(x) || !check(x)) throw new InvalidArgumentError(`invalid ${name}: ${v}`);
  return x;
};
const list = (v: string) =>
  v
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
const range =
  (name: string) =>
  (v: string): [number, number] => {
    const m = /^([\d.]+)-([\d.]+)$/.exec(v.trim());
    if (!m || !(Number(m[2]) > Number(m[1]))) throw new InvalidArgumentError(`invalid ${name}: ${v} (expected LO-HI in Hz)`);
    return [Number(m[1]), Number(m[2])];
  };
/** An option whose default --help shows once, as one would type it (commander would print a list as ["EEG"]). */
const option = (flags: string, description: string, parse: (v: string) => unknown, value: unknown, shown: string) =>
  new Option(flags, description).argParser(parse).default(value, shown);

interface Flags {
  out: string;
  jobs?: number;
  shard?: string;
  epoch: number;
  segment: number;
  overlap: number;
  maxFreq: number;
  channelTypes: string[];
  include?: string[];
  exclude?: string[];
  reference: string[];
  bipolar?: string[];
  maxPeakToPeak: number;
  flatSd: number;
  flatRun: number;
  outlierZ: number;
  broadband: [number, number];
  muscle: [number, number];
  minEpochs: number;
  band?: string[];
  bandMethod: 'mean' | 'integral';
  fitRange: [number, number];
  knee?: boolean;
  fit: boolean;
  irasa?: boolean;
  mainsHz?: number;
  quiet?: boolean;
  positions?: string;
  positionsUnit: CoordinateUnit;
  labelMap?: string;
  unknownAsUnscored?: boolean;
  trimScoring?: boolean;
  lightsOffTexts: string[];
  lightsOnTexts: string[];
  estimator: string[];
  nw: number;
  tapers?: number;
  epochSpectra?: boolean;
  epochSpectraMax: number;
  fileNames: FileNameForm;
}

export function register(program: Command): void {
  program
    .command('ingest')
    .description(
      'Turn a cohort (TSV/CSV table or BIDS folder) into the spectral database: per channel and stage Welch ' +
        'spectra (µV²/Hz), aperiodic fits, epoch band powers and quality metrics. Resumable: recordings already ' +
        'stored with the same parameters are skipped. Exit status 0 all done, 3 some recordings failed (see ' +
        'ingest_errors), 1 nothing done or the run had to stop (disk full: what was stored is kept, a rerun resumes).',
    )
    .argument('<cohort>', 'cohort table (.tsv/.csv) or BIDS folder')
    .requiredOption('--out <file>', 'database file to create or extend (DuckDB)')
    .addOption(
      option(
        '--jobs <n>',
        'worker threads, one recording each',
        num('jobs', (x) => Number.isInteger(x) && x >= 1),
        availableParallelism(),
        'one per core',
      ),
    )
    .option(
      '--shard <K/N>',
      'process only shard K of N (K from 1): the recordings sorted by subject, session and path, every N-th from the K-th; merge the shard files later',
    )
    .option(
      '--epoch <s>',
      'scoring epoch length, s',
      num('epoch', (x) => x > 0),
      D.epochS,
    )
    .option(
      '--segment <s>',
      'Welch segment length, s (frequency step 1/segment Hz)',
      num('segment', (x) => x > 0),
      D.segmentS,
    )
    .option(
      '--overlap <fraction>',
      'Welch segment overlap, 0 ≤ f < 1',
      num('overlap', (x) => x >= 0 && x < 1),
      D.overlap,
    )
    .option(
      '--max-freq <Hz>',
      'highest stored frequency, Hz (each channel at most to its own Nyquist frequency)',
      num('max-freq', (x) => x > 0),
      D.maxFreqHz,
    )
    .addOption(option('--channel-types <list>', 'channel types selected when no --include is given', list, D.channelTypes, D.channelTypes.join(',')))
    .option('--include <labels>', 'comma-separated labels or electrode names to take, whatever their type (default: the channels of --channel-types)', list)
    .option('--exclude <labels>', 'comma-separated labels or electrode names to leave out (default: none)', list)
    .addOption(option('--reference <list>', `references to compute: ${REFERENCE_KINDS.join(', ')}`, list, D.references, D.references.join(',')))
    .option('--bipolar <pairs>', "bipolar pairs for --reference bipolar, e.g. 'F3-C3,C4-P4' (default: none)", list)
    .option(
      '--max-peak-to-peak <µV>',
      'reject an epoch above this peak-to-peak amplitude, µV (common practice)',
      num('max-peak-to-peak', (x) => x > 0),
      D.rejection.maxPeakToPeakUv,
    )
    .option(
      '--flat-sd <µV>',
      'reject an epoch whose SD is below this, µV',
      num('flat-sd', (x) => x >= 0),
      D.rejection.flatSdUv,
    )
    .option(
      '--flat-run <s>',
      'reject an epoch holding one value this long, s',
      num('flat-run', (x) => x > 0),
      D.rejection.flatRunS,
    )
    .option(
      '--outlier-z <z>',
      'reject epochs whose log broadband or muscle-range power stands out within stage and channel as a modified z above this would with many epochs (Iglewicz & Hoaglin 1993); short stages get a higher limit so each rule removes 2Φ(−z) of clean epochs (0.047 % at 3.5); at least 2',
      num('outlier-z', (x) => x >= 2),
      D.rejection.outlierZ,
    )
    .addOption(
      option(
        '--broadband <LO-HI>',
        'broadband power range for the outlier rule, Hz',
        range('broadband'),
        D.rejection.broadbandHz,
        D.rejection.broadbandHz.join('-'),
      ),
    )
    .addOption(
      option(
        '--muscle <LO-HI>',
        'high-frequency (muscle) range for the outlier rule, Hz',
        range('muscle'),
        D.rejection.muscleHz,
        D.rejection.muscleHz.join('-'),
      ),
    )
    .option(
      '--min-epochs <n>',
      'flag stages with fewer clean epochs (10 = 5 min of 30-s epochs)',
      num('min-epochs', (x) => Number.isInteger(x) && x >= 1),
      D.minEpochs,
    )
    .addOption(
      option(
        '--estimator <list>',
        "spectral estimators to store: welch, multitaper (Thomson 1982: Slepian tapers on Welch's segments and grid; Welch is always stored, as epoch rejection, band powers and quality use it)",
        list,
        ['welch'],
        'welch',
      ),
    )
    .option(
      '--nw <NW>',
      'multitaper time-half-bandwidth NW: frequency resolution 2NW/segment Hz (1 Hz for 2 and 4-s segments)',
      num('nw', (x) => x >= 1),
      2,
    )
    .option(
      '--tapers <K>',
      'multitaper number of tapers K (default: 2NW − 1)',
      num('tapers', (x) => Number.isInteger(x) && x >= 1),
    )
    .option(
      '--epoch-spectra',
      "also store each epoch's Welch spectrum of every channel (recorded reference), log10 power in 16 bits: about 30 kB per channel and recording-hour to 30 Hz before compression (README)",
    )
    .option(
      '--epoch-spectra-max <Hz>',
      'highest frequency of the stored epoch spectra, Hz',
      num('epoch-spectra-max', (x) => x > 0),
      30,
    )
    .option('--band <band...>', `epoch band powers, repeatable: ${BAND_SYNTAX} (default: ${D.bands.map((b) => `${b.name}:${b.loHz}-${b.hiHz}`).join(' ')})`)
    .addOption(option('--band-method <mean|integral>', 'band power as mean density (µV²/Hz) or trapezoid integral (µV²)', String, D.bandMethod, D.bandMethod))
    .addOption(option('--fit-range <LO-HI>', 'aperiodic fit range, Hz', range('fit-range'), D.fit!.fitRangeHz, D.fit!.fitRangeHz.join('-')))
    .option('--knee', 'fit the aperiodic knee (default: plain power law, knee 0)')
    .option('--no-fit', 'skip the aperiodic and peak fits')
    .option(
      '--irasa',
      "also estimate the aperiodic component by IRASA (Wen & Liu 2016) from the clean epochs' time series, stored with method irasa (a second read of each recording; slower)",
    )
    .option(
      '--mains-hz <Hz>',
      "power-line frequency, 50 or 60: the mains-hum metric's line and the only line left out of the narrow-spike search (default: both left out, the metric's line from the BIDS sidecar, else detected)",
      num('mains-hz', (x) => x === 50 || x === 60),
    )
    .option(
      '--label-map <file.tsv>',
      'stage-label map: a TSV with columns label and stage (W, N1, N2, N3, R or unscored); its labels take precedence over the built-in ones',
    )
    .option(
      '--unknown-as-unscored',
      'score the epochs of a stage label that is neither built in nor in the label map as unscored, with a warning (default: refuse the recording)',
    )
    .option(
      '--trim-scoring',
      'drop scored stages that lie before the recording start or past its end, with a warning (default: refuse the recording, as such scoring is likely misaligned); unscored labels there are always dropped',
    )
    .addOption(
      option(
        '--lights-off-texts <list>',
        'comma-separated annotation texts that mark lights off, matched ignoring case and spaces',
        list,
        D.scoring.lightsOffTexts,
        D.scoring.lightsOffTexts.join(','),
      ),
    )
    .addOption(
      option(
        '--lights-on-texts <list>',
        'comma-separated annotation texts that mark lights on, matched ignoring case and spaces',
        list,
        D.scoring.lightsOnTexts,
        D.scoring.lightsOnTexts.join(','),
      ),
    )
    .option(
      '--positions <file.tsv>',
      "electrode positions for every recording without its own (a BIDS _electrodes.tsv beside it, or the cohort table's positions column): tab-separated name, x, y, z; its unit and axes from the <stem>_coordsystem.json beside it, else --positions-unit with x to the right ear, y to the nose, z up",
    )
    .addOption(
      option(
        '--positions-unit <m|cm|mm>',
        'unit of positions files that have no _coordsystem.json beside them',
        (v: string) => {
          if (!(COORDINATE_UNITS as readonly string[]).includes(v))
            throw new InvalidArgumentError(`--positions-unit: "${v}" is not one of ${COORDINATE_UNITS.join(', ')}`);
          return v as CoordinateUnit;
        },
        'mm',
        'mm',
      ),
    )
    .addOption(
      new Option(
        '--file-names <form>',
        "what the database keeps of each file's path: name (the file name without its folders, which often name people), " +
          "relative (the path relative to the cohort table), as-given (as the table writes it) or hash (only the file's SHA-256; failed rows named by their row)",
      )
        .choices([...FILE_NAME_FORMS])
        .default(DEFAULT_FILE_NAME_FORM),
    )
    .option('--quiet', 'no progress bars (they are off anyway when stdout is not a terminal)')
    .addHelpText('after', '\nA research tool, not a diagnostic device. No EDF patient or recording identification is stored.')
    .action(async (cohort: string, flags: Flags, cmd: Command) => {
      const code = await ingestCommand(cohort, flags, cmd);
      process.exitCode = code;
    });
}

function toParams(f: Flags): Partial<IngestParams> {
  for (const r of f.reference) {
    if (!REFERENCE_KINDS.includes(r as ReferenceKind)) throw new InvalidArgumentError(`invalid reference: ${r} (one of ${REFERENCE_KINDS.join(', ')})`);
  }
  if (f.bandMethod !== 'mean' && f.bandMethod !== 'integral') throw new InvalidArgumentError(`invalid band method: ${f.bandMethod}`);
  for (const e of f.estimator) if (e !== 'welch' && e !== 'multitaper') throw new InvalidArgumentError(`invalid estimator: ${e} (welch or multitaper)`);
  const tapers = f.tapers ?? defaultTaperCount(f.nw);
  if (f.estimator.includes('multitaper') && tapers > 2 * f.nw) throw new InvalidArgumentError(`invalid tapers: ${tapers} (at most 2NW = ${2 * f.nw})`);
  return {
    ...(f.estimator.includes('multitaper') ? { multitaper: { nw: f.nw, k: tapers } } : {}),
    ...(f.epochSpectra ? { epochSpectra: { maxHz: f.epochSpectraMax } } : {}),
    epochS: f.epoch,
    segmentS: f.segment,
    overlap: f.overlap,
    maxFreqHz: f.maxFreq,
    channelTypes: f.channelTypes.map((t) => t.toUpperCase()),
    includeChannels: f.include ?? [],
    excludeChannels: f.exclude ?? [],
    references: f.reference as ReferenceKind[],
    bipolarPairs: f.bipolar ?? [],
    rejection: {
      maxPeakToPeakUv: f.maxPeakToPeak,
      flatSdUv: f.flatSd,
      flatRunS: f.flatRun,
      outlierZ: f.outlierZ,
      broadbandHz: f.broadband,
      muscleHz: f.muscle,
    },
    minEpochs: f.minEpochs,
    bands: f.band ? (Array.isArray(f.band) ? f.band : [f.band]).map(parseBand) : D.bands,
    bandMethod: f.bandMethod,
    fit: f.fit === false ? null : { fitRangeHz: f.fitRange, aperiodicForm: f.knee ? 'knee' : 'power-law' },
    irasa: f.irasa ? {} : null,
    quality: { ...D.quality, mainsHz: f.mainsHz ? [f.mainsHz as 50 | 60] : D.quality.mainsHz },
    scoring: {
      labelMap: f.labelMap ? readLabelMap(f.labelMap) : {},
      unknownAs: f.unknownAsUnscored ? 'unscored' : 'error',
      trimScoredOutside: Boolean(f.trimScoring),
      lightsOffTexts: f.lightsOffTexts,
      lightsOnTexts: f.lightsOnTexts,
    },
  };
}

async function ingestCommand(cohort: string, f: Flags, cmd: Command): Promise<number> {
  // loaded on use: `bandwise --help` reads none of the ingest machinery
  const { default: cliProgress } = await import('cli-progress');
  const { parseShard, runIngest } = await import('../../ingest/run.ts');
  let params: Partial<IngestParams>;
  let shard = null;
  try {
    params = toParams(f);
    shard = f.shard ? parseShard(f.shard) : null;
  } catch (e) {
    cmd.error(`bandwise ingest: ${(e as Error).message}`, { exitCode: EXIT_FATAL });
  }
  const tty = Boolean(process.stdout.isTTY) && !f.quiet;
  const bars = tty
    ? new cliProgress.MultiBar(
        { format: '{name} |{bar}| {value}/{total} {unit} · {rate} · ETA {eta_formatted}', hideCursor: true, clearOnComplete: false, etaBuffer: 20 },
        cliProgress.Presets.shades_classic,
      )
    : null;
  let overall: cliProgressModule.SingleBar | null = null;
  const current = new Map<string, cliProgressModule.SingleBar>();
  const t0 = Date.now();
  let samples = 0;
  const rate = () => `${(samples / Math.max(1e-3, (Date.now() - t0) / 1000) / 1e6).toFixed(2)} M channel-samples/s`;
  const onEvent = (e: IngestEvent) => {
    if (!bars) return;
    if (e.kind === 'start') overall = bars.create(e.total, 0, { name: 'recordings', unit: 'recordings', rate: '' });
    else if (e.kind === 'progress') {
      let bar = current.get(e.file);
      if (!bar) current.set(e.file, (bar = bars.create(e.total, 0, { name: e.file.slice(-24).padEnd(24), unit: 'epochs', rate: '' })));
      bar.setTotal(e.total);
      bar.update(e.done, { unit: e.step === 'read' ? 'epochs' : 'channels', rate: e.step });
    } else {
      samples += e.channelSamples ?? 0;
      const bar = current.get(e.file);
      if (bar) {
        bars.remove(bar);
        current.delete(e.file);
      }
      overall?.increment(1, { rate: rate() });
      if (e.state === 'failed') bars.log(`failed: ${e.file}: ${e.message}\n`);
    }
  };
  // Ctrl-C or SIGTERM: stop taking recordings, let the write in progress end, checkpoint, report;
  // a second signal leaves at once (what was committed is in DuckDB's log, replayed on the next open)
  const interrupt = new AbortController();
  let caught: NodeJS.Signals | null = null;
  const onSignal = (signal: NodeJS.Signals) => {
    if (caught) {
      bars?.stop();
      process.exit(exitStatusFor(signal));
    }
    caught = signal;
    interrupt.abort();
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  try {
    const summary = await runIngest(
      cohort,
      f.out,
      { params, jobs: f.jobs, shard, positions: f.positions, positionsUnit: f.positionsUnit, signal: interrupt.signal, fileNames: f.fileNames },
      onEvent,
    );
    bars?.stop();
    if (summary.interrupted) {
      const stored = summary.done + summary.skipped;
      console.error(
        `bandwise ingest: interrupted by ${caught ?? 'a signal'}: run ${summary.runId} is unfinished; ${stored} recording${stored === 1 ? '' : 's'} stored ` +
          `(${summary.done} now, ${summary.skipped} before), ${summary.failed.length} failed, ${summary.notProcessed} not processed; ` +
          'rerun the same command to resume: recordings already stored are skipped',
      );
      return exitStatusFor(caught ?? 'SIGINT');
    }
    const secs = (Date.now() - t0) / 1000;
    console.log(
      `run ${summary.runId}: ${summary.done} done, ${summary.skipped} already stored (skipped), ${summary.failed.length} failed, ${summary.warnings} warning${summary.warnings === 1 ? '' : 's'} (table warnings), in ${secs.toFixed(1)} s`,
    );
    for (const x of summary.failed.slice(0, LISTED_FAILURES)) console.log(`  failed ${x.file} at ${x.step}: ${x.message}`);
    if (summary.failed.length > LISTED_FAILURES)
      console.log(`  … and ${summary.failed.length - LISTED_FAILURES} more failures, all in the database's ingest_errors table`);
    if (summary.failed.length === 0) return EXIT_OK;
    return summary.done + summary.skipped > 0 ? EXIT_PARTLY_FAILED : EXIT_FATAL;
  } catch (e) {
    bars?.stop();
    console.error(`bandwise ingest: ${(e as Error).message}`);
    return e instanceof OutputClashError ? EXIT_OUTPUT_REFUSED : EXIT_FATAL;
  } finally {
    process.off('SIGINT', onSignal);
    process.off('SIGTERM', onSignal);
  }
}

/** The exit status of a run stopped by this signal. */
function exitStatusFor(signal: NodeJS.Signals): number {
  return signal === 'SIGTERM' ? EXIT_INTERRUPTED.SIGTERM : EXIT_INTERRUPTED.SIGINT;
}
