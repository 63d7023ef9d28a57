/**
 * The options that define a contrast on the command line (and the contrast JSON they override),
 * shared by the commands that run one (compare, band-check).
 */
import { Command, InvalidArgumentError, Option } from 'commander';
import type { Exclusion } from '../core/contrast/data.ts';
import { parseExclusionsTsv } from '../core/contrast/exclusions.ts';
import { InputFileError, readSmallText } from '../files/input-files.ts';
import {
  BAND_DEFINITIONS,
  ESTIMATORS,
  MEASURES,
  REFERENCES,
  parseContrast,
  ContrastSpecError,
  type Contrast,
  type ContrastJson,
} from '../core/contrast/spec.ts';
import { BAND_SYNTAX, BandError, parseBand } from '../core/spectrum/bands.ts';
import { AdjacencyError, neighbourTable, type NeighbourTable } from '../core/montage/adjacency.ts';

const list = (v: string) =>
  v
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
const pair =
  (name: string) =>
  (v: string): [string, string] => {
    const parts = list(v);
    if (parts.length !== 2) throw new InvalidArgumentError(`${name} needs two values separated by a comma, got "${v}"`);
    return [parts[0], parts[1]];
  };
const num = (name: string) => (v: string) => {
  const x = Number(v);
  if (!Number.isFinite(x)) throw new InvalidArgumentError(`invalid ${name}: ${v}`);
  return x;
};

export interface Flags {
  threads?: number;
  contrast?: string;
  out: string;
  tsv?: string;
  pointsTsv?: string;
  /** compare: list one-point clusters with p above the table's limit in --tsv */
  singlePointClusters?: boolean;
  exclusions?: string;
  run?: string;
  ledger?: string | false;
  quiet?: boolean;
  design?: string;
  groupColumn?: string;
  groups?: [string, string];
  stages?: [string, string];
  sessions?: [string, string];
  session?: string;
  covariate?: string;
  nuisance?: string[];
  stage?: string;
  reference?: string;
  averaging?: string;
  estimator?: string;
  bandDefinition?: string;
  peakSearch?: [string, string];
  halfWidth?: number;
  channels?: string[];
  channelAverage?: boolean;
  fmin?: number;
  fmax?: number;
  measure?: string;
  relativeRange?: [string, string];
  band?: string[];
  bandMethod?: string;
  aperiodicMethod?: string;
  statistic?: string;
  correction?: string;
  clusterP?: number;
  permutations?: number;
  seed?: number;
  neighbours?: string;
}

/** The neighbour table a --neighbours file holds (adjacency.ts neighbourTable); a file that cannot be read is an InputFileError naming it. */
function readNeighbours(file: string): NeighbourTable {
  return neighbourTable(readSmallText(file, '--neighbours'));
}

/** The exclusions table of --exclusions (none without it); a file that cannot be read or parsed is an InputFileError. */
export function readExclusions(file: string | undefined): Exclusion[] {
  if (!file) return [];
  const text = readSmallText(file, '--exclusions');
  try {
    return parseExclusionsTsv(text, file);
  } catch (e) {
    throw new InputFileError(`--exclusions ${(e as Error).message}`);
  }
}

/** The contrast JSON file's object; anything else (null, a list, a number) is refused. */
function readContrastFile(file: string): Record<string, unknown> {
  const text = readSmallText(file, '--contrast');
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw new ContrastSpecError(`--contrast ${file} is not JSON: ${(e as Error).message}`);
  }
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    throw new ContrastSpecError(
      `--contrast ${file} holds ${value === null ? 'null' : Array.isArray(value) ? 'a list' : `a ${typeof value}`}; a contrast is a JSON object such as {"design": "groups", "groups": ["control", "patient"]}`,
    );
  }
  return value as Record<string, unknown>;
}

/** Builds the contrast JSON from the file (if any) with the command-line options on top. */
export function contrastFromFlags(f: Flags): ContrastJson {
  const base = f.contrast ? readContrastFile(f.contrast) : {};
  const set = (k: string, v: unknown) => {
    if (v !== undefined) base[k] = v;
  };
  set('design', f.design);
  set('groupColumn', f.groupColumn);
  set('groups', f.groups);
  set('stages', f.stages);
  set('sessions', f.sessions);
  set('session', f.session);
  set('covariate', f.covariate);
  set('nuisance', f.nuisance);
  set('stage', f.stage);
  set('reference', f.reference);
  set('averaging', f.averaging);
  set('estimator', f.estimator);
  set('bandDefinition', f.bandDefinition);
  set('peakSearchHz', f.peakSearch?.map(Number));
  set('halfWidthHz', f.halfWidth);
  set('channels', f.channels && f.channels.length === 1 && f.channels[0] === 'all' ? 'all' : f.channels);
  set('channelAverage', f.channelAverage);
  set('fminHz', f.fmin);
  set('fmaxHz', f.fmax);
  set('measure', f.measure);
  set('relativeRangeHz', f.relativeRange?.map(Number));
  set('bands', f.band?.map(parseBand));
  set('bandMethod', f.bandMethod);
  set('aperiodicMethod', f.aperiodicMethod);
  set('statistic', f.statistic);
  set('correction', f.correction);
  set('clusterP', f.clusterP);
  set('permutations', f.permutations);
  set('seed', f.seed);
  set('neighbours', f.neighbours === undefined ? undefined : readNeighbours(f.neighbours));
  if (base.design === undefined) base.design = 'groups';
  return base as ContrastJson;
}

/**
 * The value read, or null after printing why the input is invalid: a contrast key, its JSON file
 * or a band (exit status 2: bad input, nothing read). Shared by compare and band-check.
 */
export function inputOrExit<T>(read: () => T): T | null {
  try {
    return read();
  } catch (e) {
    if (e instanceof ContrastSpecError || e instanceof SyntaxError || e instanceof BandError || e instanceof AdjacencyError || e instanceof InputFileError) {
      console.error(e.message);
      process.exitCode = 2;
      return null;
    }
    throw e;
  }
}

/** The contrast the flags describe, or null after printing why it is invalid (exit status 2). */
export function contrastOrExit(flags: Flags): Contrast | null {
  return inputOrExit(() => parseContrast(contrastFromFlags(flags)));
}

/**
 * The options that define a contrast, plus exclusions, run, ledger and progress, shared by the
 * commands that run one (compare, band-check). bandMeasures adds --band for band-power and peak
 * measures (band-check has its own --band, the band it checks).
 */
export function addContrastOptions(command: Command, o: { bandMeasures: boolean }): Command {
  command
    .option('--contrast <file>', 'contrast JSON (the format the dashboard saves)')
    .option(
      '--exclusions <file>',
      'TSV of subjects/channels to leave out (subject, channel, optional stage, reason), as the dashboard exports it; added to the contrast\'s "exclusions"',
    )
    .option('--run <id>', 'ingest run to read (default: the most recent finished run)')
    .option(
      '--ledger <file>',
      'ledger file (JSON lines) this analysis is appended to, so reports can count every analysis run (default: <database>.ledger.jsonl)',
    )
    .option('--no-ledger', 'do not record this analysis in the ledger')
    .addOption(new Option('--design <kind>', 'groups, paired or covariate (default: groups)').choices(['groups', 'paired', 'covariate']))
    .option('--group-column <name>', 'participants column holding the groups (default: group)')
    .option('--groups <a,b>', 'the two groups; differences are b minus a', pair('--groups'))
    .option('--stages <a,b>', 'paired design over two stages of each recording, e.g. N2,N3', pair('--stages'))
    .option('--sessions <a,b>', 'paired design over two sessions of each subject', pair('--sessions'))
    .option('--session <label>', 'the session to use when subjects have several')
    .option('--covariate <name>', 'numeric participants column to correlate with (covariate design)')
    .option(
      '--nuisance <names>',
      'participants columns to adjust for, comma-separated: numeric, or categorical (text, e.g. sex: k levels become k − 1 indicator columns against the first level in sort order); Freedman–Lane permutation',
      list,
    )
    .addOption(new Option('--stage <stage>', 'sleep stage (default: N2)').choices(['W', 'N1', 'N2', 'N3', 'R']))
    .addOption(new Option('--reference <ref>', 'reference of the spectra (default: recorded)').choices([...REFERENCES]))
    .addOption(new Option('--averaging <how>', 'epoch averaging of the spectra (default: mean)').choices(['mean', 'median']))
    .addOption(new Option('--estimator <name>', 'spectral estimator of the spectra, as stored at ingest (default: welch)').choices([...ESTIMATORS]))
    .addOption(
      new Option(
        '--band-definition <how>',
        "band edges fixed as given, or individual: centred on each subject's fitted peak (band-power measures and the band check; default: fixed)",
      ).choices([...BAND_DEFINITIONS]),
    )
    .option('--peak-search <lo,hi>', "individual bands: where each subject's peak is looked for, Hz (default: the band's own edges)", pair('--peak-search'))
    .option('--half-width <hz>', "individual bands: half the band's width around the subject's peak, Hz (default: half the band's width)", num('--half-width'))
    .option('--channels <names>', 'comma-separated channels, or all (default: all)', list)
    .option('--channel-average', 'average the measure over the channels (frequency-only clusters)')
    .option(
      '--neighbours <file.tsv>',
      "channel neighbours for the clusters, one line per channel: channel<TAB>neighbour,neighbour,… (default: Delaunay neighbours of the channels' stored positions)",
    )
    .option('--fmin <hz>', 'lowest frequency, Hz (default: 1)', num('--fmin'))
    .option('--fmax <hz>', 'highest frequency, Hz (default: 30)', num('--fmax'))
    .addOption(new Option('--measure <name>', 'measure (default: log-psd)').choices([...MEASURES]))
    .option('--relative-range <lo,hi>', 'denominator range of relative measures, Hz (default: 0.5,45)', pair('--relative-range'))
    .addOption(new Option('--band-method <m>', 'band power as mean density (µV²/Hz) or trapezoid integral (µV²) (default: mean)').choices(['mean', 'integral']))
    .addOption(new Option('--aperiodic-method <m>', 'aperiodic estimate for residual/offset/exponent measures (default: fit)').choices(['fit', 'irasa']))
    .addOption(
      new Option('--statistic <name>', 'point statistic (default: welch-t for groups, paired-t, pearson for covariates)').choices([
        'welch-t',
        'student-t',
        'paired-t',
        'pearson',
        'spearman',
        'linear-model-t',
      ]),
    )
    .addOption(
      new Option('--correction <name>', 'multiple-comparison correction (default: cluster-mass)').choices(['cluster-mass', 'cluster-size', 'tfce', 'none']),
    )
    .option('--cluster-p <p>', 'two-tailed cluster-forming p (default: 0.05)', num('--cluster-p'))
    .option('--permutations <n>', 'permutations (default: 1000; exact enumeration when fewer relabellings exist)', num('--permutations'))
    .option('--seed <n>', 'seed of the permutation generator (default: 1)', num('--seed'))
    .option('--quiet', 'no progress bar');
  if (o.bandMeasures) command.option('--band <band...>', `band(s) for band-power and peak measures: ${BAND_SYNTAX}`);
  return command;
}
