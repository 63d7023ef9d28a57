/**
 * `bandwise lock <cohort.duckdb> --contrast contrast.json [--contrast …] [--exclusions file.tsv]`
 * Fixes the analysis plan explored on the split's exploration part — the contrasts, the ingest run,
 * the exclusions and the split — under the SHA-256 of its canonical JSON; prints `plan <id>`.
 */
import { readFileSync } from 'node:fs';
import { Command } from 'commander';
import { parseExclusionsTsv } from '../core/contrast/exclusions.ts';
import { parseContrast, type Contrast } from '../core/contrast/spec.ts';
import { lookedBeforeLock } from '../core/confirmation/history.ts';
import { lockPlan } from '../analysis/lock-plan.ts';
import { inputOrExit } from './contrast-options.ts';
import { reportWorkflowError } from './workflow-errors.ts';
import { looksText } from '../core/confirmation/methods-text.ts';

interface LockFlags {
  contrast: string[];
  exclusions?: string;
  run?: string;
  ledger?: string;
}

const collect = (v: string, prev: string[] = []) => [...prev, v];

export function register(program: Command): void {
  program
    .command('lock')
    .description(
      'Stores an analysis plan in the database (table analysis_plans) and the ledger: the contrasts (contrast JSON files, ' +
        'defaults filled in), the ingest run, the exclusions and the current split, with the SHA-256 of its canonical JSON ' +
        '(keys sorted) and the time. Prints "plan <id>" (the first 12 hex digits of the hash) on standard output. A plan is ' +
        'never changed: other contents are a new plan with a new id; locking the same contents again names the plan locked before. ' +
        'While the split is blinded, contrasts name the groups by their codes (group A, group B), as in exploration. ' +
        'Warns when the ledger shows that data of the confirmation part had been analysed before the lock.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) with a split (`bandwise split`)')
    .requiredOption('--contrast <file>', 'contrast JSON of the plan (the format compare and the dashboard use); repeat for several', collect)
    .option('--exclusions <file>', 'TSV of subjects/channels to leave out (subject, channel, reason), as the dashboard exports it (default: none)')
    .option('--run <id>', 'ingest run the plan reads (default: the most recent finished run)')
    .option('--ledger <file>', 'ledger file the plan is recorded in and the looks at the confirmation part are read from (default: <database>.ledger.jsonl)')
    .addHelpText(
      'after',
      '\nExample:\n  bandwise lock cohort.duckdb --contrast sigma.json --exclusions exclusions.tsv\n\nA research tool, not a diagnostic device.',
    )
    .action(async (database: string, flags: LockFlags) => {
      const contrasts = inputOrExit((): Contrast[] => flags.contrast.map((f) => parseContrast(JSON.parse(readFileSync(f, 'utf8')))));
      if (!contrasts) return;
      const exclusions = flags.exclusions ? parseExclusionsTsv(readFileSync(flags.exclusions, 'utf8'), flags.exclusions) : [];
      const ledger = flags.ledger ?? `${database}.ledger.jsonl`;
      try {
        const o = await lockPlan(database, contrasts, exclusions, flags.run, ledger);
        console.log(`plan ${o.plan.id}`);
        const c = o.plan.content;
        console.error(
          `${o.existed ? 'already locked' : 'locked'} ${o.plan.lockedAt}: SHA-256 ${o.plan.hash}; ${c.contrasts.length} contrast${c.contrasts.length === 1 ? '' : 's'}, ` +
            `${c.exclusions.length} exclusion${c.exclusions.length === 1 ? '' : 's'}, run ${c.runId}, split ${c.split.id}`,
        );
        if (lookedBeforeLock(o.looks)) console.error(`warning: ${looksText(o.looks)}; the confirmation will say so`);
      } catch (e) {
        if (reportWorkflowError('lock', e)) return;
        throw e;
      }
    });
}
