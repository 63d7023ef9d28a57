/**
 * `bandwise compare <cohort.duckdb> (--contrast contrast.json | options) --out result.json`
 * Runs one contrast headless: the same contrast JSON the dashboard saves, the same engine.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { Command, InvalidArgumentError, Option } from 'commander';
import cliProgress from 'cli-progress';
import { MEASURES, REFERENCES, parseContrast, ContrastSpecError, type Contrast, type ContrastJson } from '../../src/core/contrast/spec.ts';
import { parseExclusionsTsv } from '../../src/core/contrast/exclusions.ts';
import { BandError, parseBand } from '../../src/core/spectrum/bands.ts';
import { compareDatabase, type CompareRun } from '../compare.ts';
import { appendLedger } from '../ledger.ts';
import { reportUserError } from './user-errors.ts';

const list = (v: string) => v.split(',').map((s) => s.trim()).filter(Boolean);
const pair = (name: string) => (v: string): [string, string] => {
  const parts = list(v);
  if (parts.length !== 2) throw new InvalidArgumentError(`${name} needs two values separated by a comma, got "${v}"`);
  return [parts[0], parts[1]];
};
const num = (name: string) => (v: string) => {
  const x = Number(v);
  if (!Number.isFinite(x)) throw new InvalidArgumentError(`invalid ${name}: ${v}`);
  return x;
};

const threadCount = (v: string) => {
  const x = Number(v);
  if (!(Number.isInteger(x) && x >= 1)) throw new InvalidArgumentError(`invalid --threads: ${v} (a whole number ≥ 1)`);
  return x;
};

export interface Flags {
  threads?: number;
  contrast?: string;
  out: string;
  tsv?: string;
  pointsTsv?: string;
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
}

/** Builds the contrast JSON from the file (if any) with the command-line options on top. */
export function contrastFromFlags(f: Flags): ContrastJson {
  const base = (f.contrast ? JSON.parse(readFileSync(f.contrast, 'utf8')) : {}) as Record<string, unknown>;
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
  if (base.design === undefined) base.design = 'groups';
  return base as ContrastJson;
}

/** Clusters as TSV: one row per cluster, signs groups[1] − groups[0]. */
export function clustersTsv(r: CompareRun): string {
  const lines = ['cluster\tsign\tmass\tsize\tp\tfmin_hz\tfmax_hz\tchannels'];
  r.clusters.forEach((k, i) => lines.push([i + 1, k.sign, k.mass.toFixed(4), k.size, k.p.toPrecision(4), k.fminHz, k.fmaxHz, k.channels.join(',')].join('\t')));
  return lines.join('\n') + '\n';
}

/** Per point statistics as TSV: channel, frequency, t, df, uncorrected p, effect and interval, cluster. */
export function pointsTsv(r: CompareRun): string {
  const s = r.statistics;
  const F = s.freqsHz.length;
  const clusterOf = new Int32Array(s.stat.length);
  s.clusters.forEach((k, i) => k.points.forEach((p) => (clusterOf[p] = i + 1)));
  const lines = [`channel\tfreq_hz\tstat\tdf\tp_uncorrected\t${s.effect.kind}\tci_low\tci_high\tcluster${s.tfce ? '\ttfce\tp_tfce' : ''}`];
  for (let p = 0; p < s.stat.length; p++) {
    const df = Array.isArray(s.df) ? s.df[p] : s.df;
    const row = [s.channels[Math.floor(p / F)], s.freqsHz[p % F], s.stat[p].toFixed(5), Number(df).toFixed(3), s.pUncorrected[p].toPrecision(5), s.effect.value[p].toFixed(5), s.effect.ciLow[p].toFixed(5), s.effect.ciHigh[p].toFixed(5), clusterOf[p] || ''];
    if (s.tfce) row.push(s.tfce.score[p].toFixed(4), s.tfce.pCorrected[p].toPrecision(4));
    lines.push(row.join('\t'));
  }
  return lines.join('\n') + '\n';
}

/**
 * The options that define a contrast, plus exclusions, run, ledger and progress, shared by the
 * commands that run one (compare, band-check). bandMeasures adds --band for band-power and peak
 * measures (band-check has its own --band, the band it checks).
 */
/**
 * The contrast the flags describe, or null after printing why it is invalid (exit status 2: bad
 * input, nothing read). Shared by compare and band-check.
 */
export function contrastOrExit(flags: Flags): Contrast | null {
  try {
    return parseContrast(contrastFromFlags(flags));
  } catch (e) {
    if (e instanceof ContrastSpecError || e instanceof SyntaxError || e instanceof BandError) {
      console.error(e.message);
      process.exitCode = 2;
      return null;
    }
    throw e;
  }
}

export function addContrastOptions(command: Command, o: { bandMeasures: boolean }): Command {
  command
    .option('--contrast <file>', 'contrast JSON (the format the dashboard saves)')
    .option('--exclusions <file>', 'TSV of subjects/channels to leave out (subject, channel, reason), as the dashboard exports it')
    .option('--run <id>', 'ingest run to read (default: the most recent finished run)')
    .option('--ledger <file>', 'ledger file (JSON lines) this analysis is appended to, so reports can count every analysis run (default: <database>.ledger.jsonl)')
    .option('--no-ledger', 'do not record this analysis in the ledger')
    .addOption(new Option('--design <kind>', 'groups, paired or covariate (default groups)').choices(['groups', 'paired', 'covariate']))
    .option('--group-column <name>', 'participants column holding the groups (default group)')
    .option('--groups <a,b>', 'the two groups; differences are b minus a', pair('--groups'))
    .option('--stages <a,b>', 'paired design over two stages of each recording, e.g. N2,N3', pair('--stages'))
    .option('--sessions <a,b>', 'paired design over two sessions of each subject', pair('--sessions'))
    .option('--session <label>', 'the session to use when subjects have several')
    .option('--covariate <name>', 'numeric participants column to correlate with (covariate design)')
    .option('--nuisance <names>', 'numeric participants columns to adjust for (Freedman–Lane permutation), comma-separated', list)
    .addOption(new Option('--stage <stage>', 'sleep stage (default N2)').choices(['W', 'N1', 'N2', 'N3', 'R']))
    .addOption(new Option('--reference <ref>', 'reference of the spectra (default recorded)').choices([...REFERENCES]))
    .addOption(new Option('--averaging <how>', 'epoch averaging of the spectra (default mean)').choices(['mean', 'median']))
    .option('--channels <names>', 'comma-separated channels, or all (default all)', list)
    .option('--channel-average', 'average the measure over the channels (frequency-only clusters)')
    .option('--fmin <hz>', 'lowest frequency, Hz (default 1)', num('--fmin'))
    .option('--fmax <hz>', 'highest frequency, Hz (default 30)', num('--fmax'))
    .addOption(new Option('--measure <name>', 'measure (default log-psd)').choices([...MEASURES]))
    .option('--relative-range <lo,hi>', 'denominator range of relative measures, Hz (default 0.5,45)', pair('--relative-range'))
    .addOption(new Option('--band-method <m>', 'band power as mean density (µV²/Hz) or trapezoid integral (µV²) (default mean)').choices(['mean', 'integral']))
    .addOption(new Option('--aperiodic-method <m>', 'aperiodic estimate for residual/offset/exponent measures (default fit)').choices(['fit', 'irasa']))
    .addOption(new Option('--statistic <name>', 'point statistic (default: welch-t for groups, paired-t, pearson for covariates)').choices(['welch-t', 'student-t', 'paired-t', 'pearson', 'spearman', 'linear-model-t']))
    .addOption(new Option('--correction <name>', 'multiple-comparison correction (default cluster-mass)').choices(['cluster-mass', 'cluster-size', 'tfce', 'none']))
    .option('--cluster-p <p>', 'two-tailed cluster-forming p (default 0.05)', num('--cluster-p'))
    .option('--permutations <n>', 'permutations (default 1000; exact enumeration when fewer relabellings exist)', num('--permutations'))
    .option('--seed <n>', 'seed of the permutation generator (default 1)', num('--seed'))
    .option('--quiet', 'no progress bar');
  if (o.bandMeasures) command.option('--band <name:lo-hi...>', 'band(s) for band-power and peak measures, e.g. sigma:12-16');
  return command;
}

export function register(program: Command): void {
  const command = program
    .command('compare')
    .summary('run one contrast (groups, paired stages/sessions, covariate) with permutation correction')
    .description(
      'Runs a contrast over channels × frequencies on a bandwise database: a point statistic per channel and ' +
        'frequency (Welch t by default), cluster-based permutation correction (Maris & Oostenveld 2007) or TFCE ' +
        '(Smith & Nichols 2009). Options override the keys of --contrast. Signs are groups[1] minus groups[0] ' +
        '(paired: second minus first). Writes the full result (every parameter and the seed) as JSON. ' +
        'A research tool: results are not a diagnosis.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .requiredOption('--out <file>', 'result JSON to write')
    .option('--tsv <file>', 'cluster table as TSV')
    .option('--points-tsv <file>', 'per-point statistics (t, df, p, effect size with interval, cluster) as TSV')
    .option('--threads <n>', 'threads for the permutations (default: one per core for a large contrast, else 1); the result is the same', threadCount);
  addContrastOptions(command, { bandMeasures: true });
  command
    .action(async (database: string, flags: Flags) => {
      const contrast = contrastOrExit(flags);
      if (!contrast) return;
      const exclusions = flags.exclusions ? parseExclusionsTsv(readFileSync(flags.exclusions, 'utf8'), flags.exclusions) : [];
      const bar = !flags.quiet && process.stderr.isTTY ? new cliProgress.SingleBar({ format: 'permutations {bar} {value}/{total} | ETA {eta_formatted}', stream: process.stderr }, cliProgress.Presets.shades_classic) : null;
      let started = false;
      let result: CompareRun;
      try {
        result = await compareDatabase(database, contrast, exclusions, (done, total) => {
          if (!bar) return;
          if (!started) {
            bar.start(total, 0);
            started = true;
          }
          bar.update(done);
        }, flags.run, { threads: flags.threads });
      } catch (e) {
        bar?.stop();
        if (reportUserError('compare', e)) return;
        throw e;
      }
      bar?.stop();
      writeFileSync(flags.out, JSON.stringify(result, null, 2) + '\n');
      if (flags.tsv) writeFileSync(flags.tsv, clustersTsv(result));
      if (flags.pointsTsv) writeFileSync(flags.pointsTsv, pointsTsv(result));
      if (flags.ledger !== false) appendLedger(flags.ledger ?? `${database}.ledger.jsonl`, database, result);
      const n = Object.entries(result.n).map(([k, v]) => `${k} ${v}`).join(', ');
      const best = result.clusters[0];
      console.log(`${result.measure}; n: ${n}; excluded: ${result.exclusions.length}; clusters: ${result.clusters.length}` + (best ? `; best p = ${best.p.toPrecision(3)} (${best.sign > 0 ? '+' : '−'}, ${best.fminHz}–${best.fmaxHz} Hz, ${best.channels.join(',')})` : ''));
      for (const note of result.notes) console.log(note);
      console.log(`wrote ${flags.out}`);
    });
}
