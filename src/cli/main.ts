#!/usr/bin/env node
/**
 * The bandwise command line. Each subcommand lives in its own file under src/cli/ and adds
 * itself to the program through register(program). A command's file is loaded only when that
 * command is run or its help is asked for (`bandwise compare …`, `bandwise help compare`):
 * `bandwise --help` lists the commands from the one-line summaries below without loading any
 * of them, so it starts about as fast as Node itself (tests/bench/cli-start.bench.ts).
 */
import { Command } from 'commander';
import { readFileSync } from 'node:fs';
import { dropOutputWhenReaderCloses } from './closed-output.ts';

interface CommandFile {
  register(program: Command): void;
}

/** Every command: its name, the line `bandwise --help` shows for it, and its file. */
const COMMANDS: [name: string, summary: string, load: () => Promise<CommandFile>][] = [
  ['ingest', 'turn a cohort (table or BIDS folder) into the spectral database', () => import('./ingest.ts')],
  ['merge', 'combine shard databases written with the same parameters', () => import('./merge.ts')],
  ['compare', 'run one contrast (groups, paired stages/sessions, covariate) with permutation correction', () => import('./compare.ts')],
  ['band-check', 'is a band effect band-specific, or a broadband aperiodic change? (verdict with the numbers behind it)', () => import('./band-check.ts')],
  ['report', 'write the methods text (Markdown) and its parameters (JSON) for a saved result', () => import('./report.ts')],
  ['figure', 'draw a saved compare result as a paper figure (SVG or PNG, size in mm, caption with the parameters)', () => import('./figure.ts')],
  ['split', 'split the subjects into an exploration part and a held-out confirmation part (optionally blinded)', () => import('./split.ts')],
  ['lock', 'fix the analysis plan (contrasts, run, exclusions, split) before the confirmation part is analysed', () => import('./lock.ts')],
  ['confirm', 'run a locked plan once on the held-out confirmation part, unblinded', () => import('./confirm.ts')],
  ['cohort-table', 'a Table 1 of the cohort by group (n, participants columns, sleep architecture) as TSV', () => import('./cohort-table.ts')],
  ['power', "power of a whole contrast by simulation from a reference group's own spectra (study planning)", () => import('./power.ts')],
  ['deviation', 'score every subject against a reference group per channel × frequency (z maps; not a diagnosis)', () => import('./deviation.ts')],
  ['dashboard', 'open the dashboard on a database (served on 127.0.0.1 only)', () => import('./dashboard.ts')],
  ['cluster-script', 'write a Slurm job-array script for a sharded ingest plus the merge job', () => import('./cluster-script.ts')],
  ['simulate', 'write a synthetic cohort (EDF+, scoring, participants, ground truth) from a scenario', () => import('./simulate.ts')],
  ['demo', 'run the whole job on the invented demo cohort and open the dashboard', () => import('./demo.ts')],
];

// the built command (dist/cli/) and the sources (src/cli/) both lie two folders below the package
const pkg = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string };

const program = new Command();
program
  .name('bandwise')
  .description('Cohort-level sleep-EEG spectral database and group comparisons.\n' + 'A research tool, not a diagnostic device.')
  .version(pkg.version)
  .showHelpAfterError();

// the command named on the command line (`bandwise help <command>` names it second)
const args = process.argv.slice(2);
const named = args[0] === 'help' ? args[1] : args[0];
for (const [name, summary, load] of COMMANDS) {
  if (name === named) (await load()).register(program);
  else program.command(name).summary(summary); // listed by `bandwise --help`, never run
}

dropOutputWhenReaderCloses();
await program.parseAsync(process.argv);
