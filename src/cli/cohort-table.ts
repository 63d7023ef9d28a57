/**
 * `bandwise cohort-table <cohort.duckdb> [--group-column group] [--out table.tsv]`
 * A "Table 1" of the subjects of an ingest run by group, as TSV: n, each participants column
 * (mean (SD) or n (%) per level), total sleep time, sleep efficiency, minutes per stage and clean
 * N2 minutes (src/core/report/cohort-table.ts).
 */
import { writeFileSync } from 'node:fs';
import type { Command } from 'commander';
import { openStore } from '../../ingest/store/index.ts';
import { chooseRun } from '../analysis/compare-runner.ts';
import { readParticipants, readSleepArchitecture } from '../analysis/store-read.ts';
import { cohortTable, cohortTableTsv, type Characteristic } from '../core/report/cohort-table.ts';
import { reportUserError } from './user-errors.ts';

/** Cohort-table columns that are not characteristics (paths and labels); a text column with more levels than this is not a category. */
const NOT_CHARACTERISTICS = new Set(['subject', 'session', 'recording', 'scoring']);
const MAX_LEVELS = 12;

const SLEEP: readonly Characteristic[] = [
  { key: 'tst_min', label: 'total sleep time (min)', kind: 'numeric' },
  { key: 'se_pct', label: 'sleep efficiency (%)', kind: 'numeric' },
  { key: 'w_min', label: 'W (min)', kind: 'numeric' },
  { key: 'n1_min', label: 'N1 (min)', kind: 'numeric' },
  { key: 'n2_min', label: 'N2 (min)', kind: 'numeric' },
  { key: 'n3_min', label: 'N3 (min)', kind: 'numeric' },
  { key: 'r_min', label: 'R (min)', kind: 'numeric' },
  { key: 'clean_n2_min', label: 'clean N2 (min)', kind: 'numeric' },
];

interface Flags {
  groupColumn: string;
  out?: string;
  run?: string;
}

export function register(program: Command): void {
  program
    .command('cohort-table')
    .summary('a Table 1 of the cohort by group (n, participants columns, sleep architecture) as TSV')
    .description(
      'Writes the subjects of an ingest run by group as TSV: n; each participants column as mean (SD) (sample SD, n − 1) ' +
        'or n (%) per level; total sleep time, sleep efficiency and minutes per stage (AASM, mean over a subject\'s recordings); ' +
        'clean N2 minutes (N2 kept after epoch rejection, median over channels). Subjects without a recording in the run are not counted.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .option('--group-column <name>', 'participants column holding the groups', 'group')
    .option('--out <file>', 'TSV to write (default: standard output)')
    .option('--run <id>', 'ingest run to read (default: the most recent finished run)')
    .action(async (database: string, flags: Flags) => {
      let tsv: string;
      try {
        const store = await openStore(database, { readOnly: true });
        try {
          const run = await chooseRun(store, flags.run);
          const sleep = await readSleepArchitecture(store, run.runId);
          const table = await readParticipants(store);
          if (table.columns.length > 0 && !table.columns.some((c) => c.name === flags.groupColumn)) {
            console.error(`bandwise cohort-table: no participants column "${flags.groupColumn}" (columns: ${table.columns.map((c) => c.name).join(', ')})`);
            process.exitCode = 2;
            return;
          }
          const people = table.rows.map((r) => Object.fromEntries(table.columns.map((c, i) => [c.name, r[i]])));
          const bySubject = new Map(people.map((p) => [String(p.subject), p]));
          const characteristics: Characteristic[] = table.columns
            .filter((c) => !NOT_CHARACTERISTICS.has(c.name) && c.name !== flags.groupColumn)
            .filter((c) => c.type === 'DOUBLE' || new Set(people.map((p) => p[c.name]).filter((v) => v !== null)).size <= MAX_LEVELS)
            .map((c): Characteristic => ({ key: c.name, label: c.name, kind: c.type === 'DOUBLE' ? 'numeric' : 'categorical' }));
          const subjects = [...sleep.entries()].map(([subject, s]) => {
            const p = bySubject.get(subject) ?? {};
            const g = p[flags.groupColumn];
            return { group: g === null || g === undefined ? null : String(g), values: { ...p, ...s } };
          });
          tsv = cohortTableTsv(cohortTable(subjects, [...characteristics, ...SLEEP]));
        } finally {
          await store.close();
        }
      } catch (e) {
        if (reportUserError('cohort-table', e)) return;
        throw e;
      }
      if (flags.out) {
        writeFileSync(flags.out, tsv);
        console.log(`wrote ${flags.out}`);
      } else process.stdout.write(tsv);
    });
}
