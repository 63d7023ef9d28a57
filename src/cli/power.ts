/**
 * `bandwise power <cohort.duckdb> --contrast contrast.json --reference-group G --effect LOG10
 *  --band LO-HI --channels … --n n1,n2 --simulations K --seed S --out power.json [--tsv power.tsv]`
 * The power of a whole contrast by simulation from the reference group's own stored data
 * (src/core/planning/power.ts): power per n with its Clopper–Pearson interval, every parameter.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { Command, InvalidArgumentError } from 'commander';
import cliProgress from 'cli-progress';
import { parseExclusionsTsv } from '../core/contrast/exclusions.ts';
import { parseContrast } from '../core/contrast/spec.ts';
import { PLANTABLE_MEASURES, PlanningInputError, checkPowerPlan, type PowerPlan, type PowerResult } from '../core/planning/index.ts';
import { BAND_SYNTAX, parseBand } from '../core/spectrum/bands.ts';
import { powerDatabase, type PowerRun } from '../analysis/power-runner.ts';
import { inputOrExit } from './contrast-options.ts';
import { reportUserError } from './user-errors.ts';

interface PowerFlags {
  contrast: string;
  referenceGroup: string;
  effect: number;
  band?: string;
  channels?: string[];
  n: number[];
  simulations?: number;
  seed?: number;
  alpha?: number;
  out: string;
  tsv?: string;
  exclusions?: string;
  run?: string;
  threads?: number;
  quiet?: boolean;
}

const list = (v: string) =>
  v
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
const number = (name: string) => (v: string) => {
  const x = Number(v);
  if (v.trim() === '' || !Number.isFinite(x)) throw new InvalidArgumentError(`invalid ${name}: ${v}`);
  return x;
};
const whole = (name: string, min: number) => (v: string) => {
  const x = Number(v);
  if (!(Number.isInteger(x) && x >= min)) throw new InvalidArgumentError(`invalid ${name}: ${v} (a whole number ≥ ${min})`);
  return x;
};
const sizes = (v: string) => list(v).map((s) => whole('--n', 2)(s));

/** The power curve as TSV: one row per n per group. */
export function powerTsv(r: PowerResult): string {
  const lines = ['n_per_group\tpower\tci_low\tci_high\tsimulations\tfound\tany_significant'];
  for (const p of r.curve)
    lines.push([p.nPerGroup, p.power.toFixed(4), p.ciLow.toFixed(4), p.ciHigh.toFixed(4), p.simulations, p.found, p.anySignificant.toFixed(4)].join('\t'));
  return lines.join('\n') + '\n';
}

export function register(program: Command): void {
  program
    .command('power')
    .summary("power of a whole contrast by simulation from a reference group's own spectra (study planning)")
    .description(
      'Estimates how often the contrast (its measure, statistic, correction, cluster-forming p and permutations, as given) ' +
        'finds an effect of a given size: each simulation draws two groups of n subjects with replacement from the ' +
        "reference group's stored data (keeping the real spread between subjects and its covariance over channels and " +
        "frequencies), adds the effect to the second group's measure in the band and channels, runs the contrast, and " +
        'counts it found when a significant finding of the planted sign overlaps the planted points. How the effect is ' +
        `added: log-psd, relative, residual, band-power, relative-band-power and offset + effect in log10 units; exponent + effect in exponent units (measures: ${PLANTABLE_MEASURES.join(', ')}). ` +
        'Writes the power per n with its Clopper–Pearson 95 % interval and every parameter. A research tool for planning; not a diagnosis.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .requiredOption('--contrast <file>', 'contrast JSON (a groups design; the format the dashboard saves)')
    .requiredOption('--reference-group <value>', "value of the contrast's group column whose subjects are drawn from")
    .requiredOption('--effect <change>', 'the planted change: log10 units (exponent: exponent units); negative lowers the second group', number('--effect'))
    .option('--band <band>', `band the effect is planted in (not for offset and exponent): ${BAND_SYNTAX}`)
    .option('--channels <names>', "comma-separated channels the effect is planted in, or all (default all of the contrast's)", list)
    .requiredOption('--n <sizes>', 'subjects per group, comma-separated (one power estimate each)', sizes)
    .option('--simulations <k>', 'simulations per n (default 200)', whole('--simulations', 1))
    .option('--seed <s>', "seed of the draws and of every simulation's permutations (default 1)", whole('--seed', -(2 ** 31)))
    .option('--alpha <a>', "significance level of the contrast's p-values (default 0.05)", number('--alpha'))
    .requiredOption('--out <file>', 'result JSON to write')
    .option('--tsv <file>', 'the power curve as TSV')
    .option('--exclusions <file>', 'TSV of subjects/channels to leave out (subject, channel, reason), as the dashboard exports it')
    .option('--run <id>', 'ingest run to read (default: the most recent finished run)')
    .option(
      '--threads <n>',
      'threads for the simulations (default: one per core for a large simulation, else 1); the result is the same',
      whole('--threads', 1),
    )
    .option('--quiet', 'no progress bar')
    .action(async (database: string, flags: PowerFlags) => {
      const contrast = inputOrExit(() => parseContrast(JSON.parse(readFileSync(flags.contrast, 'utf8'))));
      if (!contrast) return;
      const band = flags.band === undefined ? null : inputOrExit(() => parseBand(flags.band!));
      if (flags.band !== undefined && !band) return;
      const channels = !flags.channels || (flags.channels.length === 1 && flags.channels[0] === 'all') ? 'all' : flags.channels;
      const plan: PowerPlan = {
        referenceGroup: flags.referenceGroup,
        effect: flags.effect,
        band,
        channels,
        nPerGroup: flags.n,
        simulations: flags.simulations ?? 200,
        seed: flags.seed ?? 1,
        alpha: flags.alpha ?? 0.05,
      };
      try {
        checkPowerPlan(contrast, plan);
      } catch (e) {
        if (!(e instanceof PlanningInputError)) throw e;
        console.error(`bandwise power: ${e.message}`);
        process.exitCode = 2;
        return;
      }
      const exclusions = flags.exclusions ? parseExclusionsTsv(readFileSync(flags.exclusions, 'utf8'), flags.exclusions) : [];
      const bar =
        !flags.quiet && process.stderr.isTTY
          ? new cliProgress.SingleBar(
              { format: 'simulations {bar} {value}/{total} | ETA {eta_formatted}', stream: process.stderr },
              cliProgress.Presets.shades_classic,
            )
          : null;
      let started = false;
      let result: PowerRun;
      try {
        result = await powerDatabase(database, contrast, plan, exclusions, {
          runId: flags.run,
          threads: flags.threads,
          onProgress: (done, total) => {
            if (!bar) return;
            if (!started) {
              bar.start(total, 0);
              started = true;
            }
            bar.update(done);
          },
        });
      } catch (e) {
        bar?.stop();
        if (e instanceof PlanningInputError) {
          console.error(`bandwise power: ${e.message}`);
          process.exitCode = 1;
          return;
        }
        if (reportUserError('power', e)) return;
        throw e;
      }
      bar?.stop();
      writeFileSync(flags.out, JSON.stringify(result, null, 2) + '\n');
      if (flags.tsv) writeFileSync(flags.tsv, powerTsv(result));
      console.log(
        `${result.measure}; reference ${contrast.groupColumn} = ${result.referenceGroup} (${result.referenceSubjects.length} subjects); effect ${result.effect} ${result.effectUnit}; ${result.simulations} simulations per n; ${result.seconds.toFixed(1)} s on ${result.threads} thread${result.threads === 1 ? '' : 's'}`,
      );
      for (const p of result.curve) console.log(`n = ${p.nPerGroup} per group: power ${p.power.toFixed(3)} [${p.ciLow.toFixed(3)}, ${p.ciHigh.toFixed(3)}]`);
      for (const note of result.notes) console.log(note);
      console.log(`wrote ${flags.out}`);
    });
}
