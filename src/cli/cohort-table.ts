/**
 * `bandwise cohort-table <cohort.duckdb> [--group-column group] [--out table.tsv]`
 * A "Table 1" of the subjects of an ingest run by group, as TSV: n, each participants column
 * (mean (SD) or n (%) per level), total sleep time, sleep efficiency, minutes per stage and clean
 * N2 minutes (src/core/report/cohort-table.ts).
 */
import { writeFileSync } from 'node:fs';
import type { Command } from 'commander';
import type { Characteristic } from '../core/report/cohort-table.ts';

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
        "or n (%) per level; total sleep time, sleep efficiency and minutes per stage (AASM, mean over a subject's recordings); " +
        'clean N2 minutes (N2 kept after epoch rejection, median over channels). Subjects without a recording in the run are not counted.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .option('--group-column <name>', 'participants column holding the groups', 'group')
    .option('--out <file>', 'TSV to write (default: standard output)')
    .option('--run <id>', 'ingest run to read (default: the most recent finished run)')
    .action(async (database: string, flags: Flags) => {
      // loaded on use: `bandwise --help` reads none of the analysis code
      const { withDatabase } = await import('../analysis/store-client.ts');
      const { participants, sleepArchitectureBySubject } = await import('../queries/cohort.ts');
      const { chooseRun, runs } = await import('../queries/runs.ts');
      const { cohortSchema } = await import('../queries/schema.ts');
      const { cohortTable, cohortTableTsv } = await import('../core/report/cohort-table.ts');
      const { reportUserError } = await import('./user-errors.ts');
      let tsv: string | null;
      try {
        tsv = await withDatabase(database, async (db) => {
          const run = chooseRun(await runs(db), flags.run);
          const sleep = await sleepArchitectureBySubject(db, run.runId);
          if (sleep === null) {
            console.error(
              'bandwise cohort-table: this database has no tidy views (written by an earlier bandwise): merge it into a new file with `bandwise merge`',
            );
            process.exitCode = 1;
            return null;
          }
          const schema = await cohortSchema(db);
          const table = schema.columns('participants').length > 0 ? await participants(db, schema) : { columns: [], rows: [] };
          if (table.columns.length > 0 && !table.columns.some((c) => c.name === flags.groupColumn)) {
            console.error(`bandwise cohort-table: no participants column "${flags.groupColumn}" (columns: ${table.columns.map((c) => c.name).join(', ')})`);
            process.exitCode = 2;
            return null;
          }
          const bySubject = new Map(table.rows.map((p) => [String(p.subject), p]));
          const characteristics = table.columns
            .filter((c) => !NOT_CHARACTERISTICS.has(c.name) && c.name !== flags.groupColumn)
            .map((c): Characteristic => ({
              key: c.name,
              label: c.name,
              kind: table.rows.some((p) => typeof p[c.name] === 'number') ? 'numeric' : 'categorical',
            }))
            .filter((c) => c.kind === 'numeric' || new Set(table.rows.map((p) => p[c.key]).filter((v) => v !== null)).size <= MAX_LEVELS);
          const subjects = [...sleep.entries()].map(([subject, s]) => {
            const p = bySubject.get(subject) ?? {};
            const g = p[flags.groupColumn];
            return { group: g === null || g === undefined ? null : String(g), values: { ...p, ...s } as Record<string, number | string | null> };
          });
          return cohortTableTsv(cohortTable(subjects, [...characteristics, ...SLEEP]));
        });
      } catch (e) {
        if (reportUserError('cohort-table', e)) return;
        throw e;
      }
      if (tsv === null) return;
      if (flags.out) {
        writeFileSync(flags.out, tsv);
        console.log(`wrote ${flags.out}`);
      } else process.stdout.write(tsv);
    });
}
