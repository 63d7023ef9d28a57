/**
 * `bandwise deviation <cohort.duckdb> --reference-group G --stage S --measure M [--covariates a,b]
 *  --out deviation.json` — every subject scored against a reference group per channel × point
 * (src/core/planning/deviation.ts): z maps, the share of points beyond |z| > 2 per subject with
 * the share expected, and its distribution per group. Not a diagnosis.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { Command, InvalidArgumentError, Option } from 'commander';
import { parseExclusionsTsv } from '../core/contrast/exclusions.ts';
import { REFERENCES } from '../core/contrast/spec.ts';
import {
  DEVIATION_MEASURES,
  DeviationSpecError,
  PlanningInputError,
  parseDeviationSpec,
  type DeviationResult,
  type DeviationSpec,
  type DeviationSpecJson,
} from '../core/planning/index.ts';
import { BAND_SYNTAX, BandError, parseBand } from '../core/spectrum/bands.ts';
import { deviationDatabase, type DeviationRun } from '../analysis/deviation-runner.ts';
import { reportUserError } from './user-errors.ts';

interface DeviationFlags {
  referenceGroup: string;
  groupColumn?: string;
  covariates?: string[];
  stage?: string;
  measure?: string;
  reference?: string;
  averaging?: string;
  session?: string;
  channels?: string[];
  fmin?: number;
  fmax?: number;
  band?: string[];
  bandMethod?: string;
  aperiodicMethod?: string;
  relativeRange?: string[];
  out: string;
  tsv?: string;
  exclusions?: string;
  run?: string;
}

const list = (v: string) =>
  v
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
const num = (name: string) => (v: string) => {
  const x = Number(v);
  if (v.trim() === '' || !Number.isFinite(x)) throw new InvalidArgumentError(`invalid ${name}: ${v}`);
  return x;
};

/** The settings JSON the flags describe (not yet validated). */
function specFromFlags(f: DeviationFlags): DeviationSpecJson {
  const out: Record<string, unknown> = { referenceGroup: f.referenceGroup };
  const set = (k: string, v: unknown) => v !== undefined && (out[k] = v);
  set('groupColumn', f.groupColumn);
  set('covariates', f.covariates);
  set('stage', f.stage);
  set('measure', f.measure);
  set('reference', f.reference);
  set('averaging', f.averaging);
  set('session', f.session);
  set('channels', f.channels && f.channels.length === 1 && f.channels[0] === 'all' ? 'all' : f.channels);
  set('fminHz', f.fmin);
  set('fmaxHz', f.fmax);
  set('bands', f.band?.map(parseBand));
  set('bandMethod', f.bandMethod);
  set('aperiodicMethod', f.aperiodicMethod);
  set('relativeRangeHz', f.relativeRange?.map(Number));
  return out as DeviationSpecJson;
}

/** One row per subject: group, whether in the reference group, share beyond |z| > 2, mean z. */
export function deviationTsv(r: DeviationResult): string {
  const lines = [`subject\tgroup\treference\tshare_beyond_2\texpected_share\tmean_z`];
  for (const s of r.subjects)
    lines.push([s.subject, s.group ?? '', s.reference ? 'yes' : 'no', s.share.toFixed(4), r.expectedShare.toFixed(4), s.meanZ.toFixed(4)].join('\t'));
  return lines.join('\n') + '\n';
}

export function register(program: Command): void {
  program
    .command('deviation')
    .summary('score every subject against a reference group per channel × frequency (z maps; not a diagnosis)')
    .description(
      "Scores every subject's measure at every channel and frequency against the reference group: z = (value − reference " +
        'mean)/(reference SD·√(1 + 1/m)), or with --covariates against a least-squares fit on the reference group (text ' +
        'covariates as indicator columns). Not robust (mean and SD); reference subjects are scored leave-one-out, never ' +
        "against themselves. Writes the z maps, each subject's share of points beyond |z| > 2 with the share expected " +
        "from the reference subjects' own scores, and per group the distribution of those shares. A research tool: an " +
        'individual deviation is not a clinical finding.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .requiredOption('--reference-group <value>', 'value of the group column whose subjects form the reference')
    .option('--group-column <name>', 'participants column holding the groups (default group)')
    .option('--covariates <names>', 'participants columns regressed out on the reference group, comma-separated (e.g. age,sex)', list)
    .addOption(new Option('--stage <stage>', 'sleep stage (default N2)').choices(['W', 'N1', 'N2', 'N3', 'R']))
    .addOption(new Option('--measure <name>', 'measure (default log-psd)').choices([...DEVIATION_MEASURES]))
    .addOption(new Option('--reference <ref>', 'reference of the spectra (default recorded)').choices([...REFERENCES]))
    .addOption(new Option('--averaging <how>', 'epoch averaging of the spectra (default mean)').choices(['mean', 'median']))
    .option('--session <label>', 'the session to use when subjects have several')
    .option('--channels <names>', 'comma-separated channels, or all (default all)', list)
    .option('--fmin <hz>', 'lowest frequency, Hz (default 1)', num('--fmin'))
    .option('--fmax <hz>', 'highest frequency, Hz (default 30)', num('--fmax'))
    .option('--band <band...>', `band(s) of band-power and peak-height measures: ${BAND_SYNTAX}`)
    .addOption(new Option('--band-method <m>', 'band power as mean density (µV²/Hz) or trapezoid integral (µV²) (default mean)').choices(['mean', 'integral']))
    .addOption(new Option('--aperiodic-method <m>', 'aperiodic estimate for residual/offset/exponent measures (default fit)').choices(['fit', 'irasa']))
    .option('--relative-range <lo,hi>', 'denominator range of relative measures, Hz (default 0.5,45)', list)
    .requiredOption('--out <file>', 'result JSON to write')
    .option('--tsv <file>', 'per-subject summary (share beyond |z| > 2, expected share, mean z) as TSV')
    .option('--exclusions <file>', 'TSV of subjects/channels to leave out (subject, channel, reason), as the dashboard exports it')
    .option('--run <id>', 'ingest run to read (default: the most recent finished run)')
    .action(async (database: string, flags: DeviationFlags) => {
      let spec: DeviationSpec;
      try {
        spec = parseDeviationSpec(specFromFlags(flags));
      } catch (e) {
        if (!(e instanceof DeviationSpecError || e instanceof BandError)) throw e;
        console.error(e.message);
        process.exitCode = 2;
        return;
      }
      const exclusions = flags.exclusions ? parseExclusionsTsv(readFileSync(flags.exclusions, 'utf8'), flags.exclusions) : [];
      let result: DeviationRun;
      try {
        result = await deviationDatabase(database, spec, exclusions, flags.run);
      } catch (e) {
        if (e instanceof PlanningInputError) {
          console.error(`bandwise deviation: ${e.message}`);
          process.exitCode = 1;
          return;
        }
        if (reportUserError('deviation', e)) return;
        throw e;
      }
      writeFileSync(flags.out, JSON.stringify(result) + '\n');
      if (flags.tsv) writeFileSync(flags.tsv, deviationTsv(result));
      console.log(
        `${result.measure}; reference ${spec.groupColumn} = ${spec.referenceGroup} (${result.reference.n} subjects${spec.covariates.length ? `, adjusted for ${spec.covariates.join(', ')}` : ''}); ${result.subjects.length} subjects scored, ${result.excluded.length} left out`,
      );
      console.log(`share of points beyond |z| > 2: expected ${(100 * result.expectedShare).toFixed(1)} % (reference subjects, leave-one-out)`);
      for (const g of result.groups)
        console.log(
          `  ${g.group ?? '(no group)'}: n ${g.n}, median ${(100 * g.shares.median).toFixed(1)} %, max ${(100 * g.shares.max).toFixed(1)} %, ${g.beyondReference95} above the reference 95th percentile, mean z ${g.meanZ.toFixed(2)}`,
        );
      console.log(`wrote ${flags.out}`);
    });
}
