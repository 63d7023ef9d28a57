/**
 * `bandwise split <cohort.duckdb> --fraction F --seed S [--stratify cols] [--blind [column]] [--replace]`
 * Splits the subjects into an exploration part and a confirmation part, stratified, from a seed;
 * with --blind the groups are coded while exploring. Every analysis then reads the exploration
 * part only, until `bandwise confirm` runs a locked plan on the confirmation part.
 */
import { Command, InvalidArgumentError } from 'commander';
import { makeSplit, type SplitOutcome } from '../analysis/make-split.ts';
import { withDatabase } from '../analysis/store-client.ts';
import { cohortSchema } from '../queries/schema.ts';
import { reportWorkflowError } from './workflow-errors.ts';

interface SplitFlags {
  fraction: number;
  seed: number;
  stratify?: string;
  blind?: string | boolean;
  replace?: boolean;
  ledger?: string | false;
}

const fraction = (v: string) => {
  const x = Number(v);
  if (!(Number.isFinite(x) && x > 0 && x < 1)) throw new InvalidArgumentError(`invalid --fraction: ${v} (between 0 and 1, e.g. 0.5)`);
  return x;
};
const seed = (v: string) => {
  const x = Number(v);
  if (!(Number.isInteger(x) && x >= 0 && x <= 2147483647)) throw new InvalidArgumentError(`invalid --seed: ${v} (a whole number from 0 to 2147483647)`);
  return x;
};

/** The stratifying columns: as given, none for "none", else group when participants has it. */
async function stratifyColumns(database: string, given: string | undefined): Promise<string[]> {
  if (given !== undefined)
    return given.trim().toLowerCase() === 'none'
      ? []
      : given
          .split(',')
          .map((s) => s.trim())
          .filter(Boolean);
  return withDatabase(database, async (db) => ((await cohortSchema(db)).has('participants', 'group') ? ['group'] : []));
}

function strataLine(columns: string[], key: string, s: { exploration: number; confirmation: number }): string {
  const values = JSON.parse(key) as (string | null)[];
  const name = columns.map((c, i) => `${c} ${values[i] ?? '(missing)'}`).join(', ');
  return `  ${name}: exploration ${s.exploration}, confirmation ${s.confirmation}`;
}

function print(o: SplitOutcome): void {
  const s = o.split.stamp;
  const strata = s.stratify.length > 0 ? `stratified by ${s.stratify.join(', ')} (${o.strataCount} strata)` : 'not stratified';
  console.log(
    `split ${s.id}: exploration ${s.subjects.exploration} subjects, confirmation ${s.subjects.confirmation} (fraction ${s.fraction}, seed ${s.seed}, ${strata})`,
  );
  for (const x of o.strata) console.log(strataLine(s.stratify, x.stratum, x));
  if (s.blindColumn !== null) {
    const codes = Object.values(o.split.codes ?? {}).sort();
    console.log(
      `blinded: the values of "${s.blindColumn}" are shown as ${codes.join(', ')} in every exploration result and screen, with group sizes pooled; only bandwise confirm shows the real groups`,
    );
  }
  if (o.labelsTellGroups)
    console.log(
      "warning: the subject labels tell the blinded groups apart (each group's labels share a beginning no other label has); blinding codes the column, not the labels",
    );
  if (o.replaced) {
    const r = o.replaced;
    const plans = r.plans.map((p) => `${p.id} (${p.confirmations} confirmation${p.confirmations === 1 ? '' : 's'})`).join(', ');
    console.log(
      `replaced split ${r.id} (made ${r.madeAt}): the ledger records ${r.analyses.exploration} analys${r.analyses.exploration === 1 ? 'is' : 'es'} on its exploration part and ${r.analyses.confirmation} on its confirmation part` +
        (plans ? `; plans locked on it, which can no longer be confirmed: ${plans}` : '; no plan was locked on it'),
    );
  }
  console.log('every compare, band check and dashboard analysis now reads the exploration part only');
}

export function register(program: Command): void {
  program
    .command('split')
    .description(
      'Draws a split of the subjects (participants table) into an exploration part and a confirmation part from a seed, ' +
        'stratified by participants columns: each stratum enters the exploration part in the given fraction, within one subject. ' +
        'While a split exists, compare, band-check and every dashboard analysis read the exploration part only and say so in their ' +
        'results; `bandwise lock` fixes the plan explored and `bandwise confirm` runs it once on the confirmation part. ' +
        'With --blind the values of the group column are coded (group A, group B, …, assigned from the seed) and group sizes ' +
        'pooled in every exploration result, so a pipeline can be tuned without seeing which way a difference goes. ' +
        'A second split is refused unless --replace is given. The split is stored in the database (table subject_split) and the ledger.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .option('--fraction <f>', 'share of each stratum in the exploration part, between 0 and 1', fraction, 0.5)
    .requiredOption('--seed <n>', 'seed of the draw (and of the group codes), a whole number from 0 to 2147483647', seed)
    .option('--stratify <columns>', 'participants columns to stratify by, comma-separated, or none (default: group, when the table has it)')
    .option('--blind [column]', 'code the groups of this participants column while exploring (default column: group)')
    .option('--replace', 'replace the current split (the analyses on it are listed from the ledger)')
    .option('--ledger <file>', 'ledger file the split is recorded in (default: <database>.ledger.jsonl)')
    .option('--no-ledger', 'do not record the split in the ledger')
    .addHelpText('after', '\nExample:\n  bandwise split cohort.duckdb --fraction 0.5 --seed 20240601 --blind\n\nA research tool, not a diagnostic device.')
    .action(async (database: string, flags: SplitFlags) => {
      try {
        const stratify = await stratifyColumns(database, flags.stratify);
        const blindColumn = flags.blind === undefined || flags.blind === false ? null : flags.blind === true ? 'group' : flags.blind;
        const ledger = flags.ledger === false ? null : (flags.ledger ?? `${database}.ledger.jsonl`);
        print(await makeSplit(database, { fraction: flags.fraction, seed: flags.seed, stratify, blindColumn, replace: flags.replace ?? false }, ledger));
      } catch (e) {
        if (reportWorkflowError('split', e)) return;
        throw e;
      }
    });
}
