/**
 * Slurm scripts for a sharded ingest: one job array (one task per shard K of N runs
 * `bandwise ingest … --shard K/N` into its own shard database), then the merge as a job that
 * depends on every array task having succeeded (`--dependency=afterok:<array job id>`), and a
 * small submit script that submits both and says what it did.
 *
 * The tasks must see the same paths as the machine the scripts were written on (a shared file
 * system, as on most clusters), so every path is made absolute. Exit status 3 of an ingest task
 * (some recordings failed; they are in ingest_errors, the others stored) counts as success for
 * the dependency, so the merge still runs and the failures show in the merged database.
 *
 * Slurm facts used (sbatch(1), Slurm 22.05): `#SBATCH` lines before the first command;
 * `--array=1-N` sets SLURM_ARRAY_TASK_ID per task; `%A` / `%a` in --output are the array job id
 * and task id, `%j` the job id; `--parsable` prints "jobid[;cluster]";
 * `--kill-on-invalid-dep=yes` cancels a job whose dependency can never be met.
 */
import { chmodSync, mkdirSync } from 'node:fs';
import { refuseClashes, writeFileReplacing } from '../files/output-files.ts';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/** Options of the scripts that cannot be used, naming the option and value. */
export class ClusterScriptError extends Error {
  override name = 'ClusterScriptError';
}

export interface ClusterScriptOptions {
  /** Cohort table or BIDS folder. */
  cohort: string;
  /** Merged cohort database to write. */
  out: string;
  /** Number of shards N (= array tasks). */
  shards: number;
  /** Folder for the shard databases (default: <out without .duckdb>.shards). */
  shardDir?: string;
  /** Folder for the per-task logs (default: <shardDir>/logs). */
  logDir?: string;
  partition?: string;
  /** CPUs per task; the ingest runs that many worker threads (default 1). */
  cpus?: number;
  /** Memory per task, Slurm syntax (e.g. 4G, 500M). */
  mem?: string;
  /** Time limit per task, Slurm syntax (minutes, HH:MM:SS, D-HH:MM…). */
  time?: string;
  /** Job name prefix (default bandwise). */
  jobName?: string;
  /** How a task starts bandwise, as shell words already quoted (default: this node and this bandwise). */
  command?: string;
  /** More `bandwise ingest` options, one word each (e.g. ['--reference', 'recorded,average']). */
  ingestOptions?: string[];
}

export interface ClusterScripts {
  /** The job array: sbatch script text. */
  ingest: string;
  /** The merge job: sbatch script text. */
  merge: string;
  /** Submits both, the merge depending on the array. */
  submit: string;
  /** Shard database paths, 1..N. */
  shardFiles: string[];
  logDir: string;
}

/** Quote one word for bash (single quotes; a single quote becomes '\''). */
export function shellQuote(word: string): string {
  return /^[A-Za-z0-9_@%+=:,./-]+$/.test(word) ? word : `'${word.replaceAll("'", `'\\''`)}'`;
}

/**
 * `node /…/dist/cli/bandwise.js`, absolute: the built command of the install the scripts are
 * written from (the sources in src/cluster/ and the build in dist/cli/ both lie two folders below it).
 */
export function defaultBandwiseCommand(): string {
  const bin = fileURLToPath(new URL('../../dist/cli/bandwise.js', import.meta.url));
  return `${shellQuote(process.execPath)} ${shellQuote(bin)}`;
}

/** Options the scripts set themselves; given again in ingestOptions they would clash. */
const OWN_INGEST_OPTIONS = ['--out', '--shard', '--jobs', '--quiet'];

function check(o: ClusterScriptOptions): void {
  if (!Number.isSafeInteger(o.shards) || o.shards < 1) throw new ClusterScriptError(`--shards must be a whole number ≥ 1, got ${o.shards}`);
  if (o.cpus !== undefined && (!Number.isSafeInteger(o.cpus) || o.cpus < 1)) throw new ClusterScriptError(`--cpus must be a whole number ≥ 1, got ${o.cpus}`);
  if (o.partition !== undefined && !/^[A-Za-z0-9_.,-]+$/.test(o.partition))
    throw new ClusterScriptError(`--partition '${o.partition}': letters, digits and _ . , - only`);
  // sbatch(1) --mem: a number with an optional unit suffix K, M, G or T
  if (o.mem !== undefined && !/^\d+[KMGT]?$/i.test(o.mem)) throw new ClusterScriptError(`--mem '${o.mem}': expected a size such as 4G or 500M`);
  // sbatch(1) --time: minutes, MM:SS, HH:MM:SS, D-HH, D-HH:MM or D-HH:MM:SS
  if (o.time !== undefined && !/^(\d+|\d+:\d{1,2}|\d+:\d{1,2}:\d{1,2}|\d+-\d{1,2}(:\d{1,2}){0,2})$/.test(o.time)) {
    throw new ClusterScriptError(`--time '${o.time}': expected minutes, HH:MM:SS or D-HH:MM:SS`);
  }
  if (o.jobName !== undefined && !/^[A-Za-z0-9_.-]+$/.test(o.jobName))
    throw new ClusterScriptError(`--job-name '${o.jobName}': letters, digits and _ . - only`);
  for (const opt of o.ingestOptions ?? []) {
    const name = opt.split('=')[0];
    if (OWN_INGEST_OPTIONS.includes(name)) throw new ClusterScriptError(`ingest option ${name} is set by the scripts (one shard file per task); leave it out`);
  }
}

/** #SBATCH lines are not read by a shell: refuse what they cannot carry. */
function sbatchPath(p: string, what: string): string {
  if (/[\s%"'\\]/.test(p))
    throw new ClusterScriptError(`${what} '${p}' contains a space, quote, backslash or %, which #SBATCH lines cannot carry; choose another folder`);
  return p;
}

/** The three scripts as text (pure apart from resolving paths against the current folder). */
export function clusterScripts(o: ClusterScriptOptions): ClusterScripts {
  check(o);
  const n = o.shards;
  const cohort = path.resolve(o.cohort);
  const out = path.resolve(o.out);
  const shardDir = path.resolve(o.shardDir ?? `${out.replace(/\.duckdb$/i, '')}.shards`);
  const logDir = sbatchPath(path.resolve(o.logDir ?? path.join(shardDir, 'logs')), 'log folder');
  const name = o.jobName ?? 'bandwise';
  const command = o.command ?? defaultBandwiseCommand();
  const shardFile = (k: string) => path.join(shardDir, `shard-${k}-of-${n}.duckdb`);
  const shardFiles = Array.from({ length: n }, (_, i) => shardFile(String(i + 1)));
  const resources = [
    o.partition !== undefined ? `#SBATCH --partition=${o.partition}` : null,
    o.mem !== undefined ? `#SBATCH --mem=${o.mem}` : null,
    o.time !== undefined ? `#SBATCH --time=${o.time}` : null,
  ].filter((l) => l !== null);
  const extra = (o.ingestOptions ?? []).map(shellQuote).join(' ');

  const ingest = [
    '#!/bin/bash',
    `# bandwise ingest as a Slurm job array: task K of ${n} ingests shard K/${n} of the cohort (which`,
    '# recordings a shard takes: `bandwise ingest --help`, option --shard) into its own shard database.',
    '# Submit with submit.sh, which queues the merge after it.',
    `#SBATCH --job-name=${name}-ingest`,
    `#SBATCH --array=1-${n}`,
    `#SBATCH --cpus-per-task=${o.cpus ?? 1}`,
    ...resources,
    `#SBATCH --output=${logDir}/ingest-%A_%a.out`,
    `#SBATCH --error=${logDir}/ingest-%A_%a.err`,
    'set -uo pipefail',
    'K="${SLURM_ARRAY_TASK_ID:?submit this script with sbatch: it is a job array}"',
    `N=${n}`,
    `mkdir -p ${shellQuote(shardDir)}`,
    `${command} ingest ${shellQuote(cohort)} --out ${shellQuote(shardDir)}/shard-"$K"-of-"$N".duckdb --shard "$K/$N" --jobs "\${SLURM_CPUS_PER_TASK:-1}" --quiet${extra ? ` ${extra}` : ''}`,
    'status=$?',
    '# 3: some recordings failed (listed above and in ingest_errors), the others are stored: the merge still runs',
    'if [ "$status" -eq 3 ]; then echo "bandwise: shard $K/$N partly failed; see ingest_errors after the merge" >&2; exit 0; fi',
    'exit "$status"',
    '',
  ].join('\n');

  const merge = [
    '#!/bin/bash',
    `# Merge the ${n} shard databases into ${out} and run the cohort-level quality pass.`,
    '# Queued by submit.sh with --dependency=afterok on the ingest array: it starts when every task succeeded.',
    `#SBATCH --job-name=${name}-merge`,
    '#SBATCH --cpus-per-task=1',
    ...resources,
    `#SBATCH --output=${logDir}/merge-%j.out`,
    `#SBATCH --error=${logDir}/merge-%j.err`,
    'set -euo pipefail',
    `exec ${command} merge \\`,
    ...shardFiles.map((f) => `  ${shellQuote(f)} \\`),
    `  --out ${shellQuote(out)}`,
    '',
  ].join('\n');

  const submit = [
    '#!/bin/bash',
    '# Submits the ingest job array, then the merge as a job depending on it (afterok).',
    'set -euo pipefail',
    'here="$(cd "$(dirname "$0")" && pwd)"',
    `mkdir -p ${shellQuote(logDir)}`,
    'array="$(sbatch --parsable "$here/ingest.sbatch")"',
    'array="${array%%;*}"',
    'merge="$(sbatch --parsable --dependency=afterok:"$array" --kill-on-invalid-dep=yes "$here/merge.sbatch")"',
    'merge="${merge%%;*}"',
    `echo "ingest array job $array (${n} tasks) and merge job $merge (starts after every task succeeded)"`,
    `echo "watch: squeue -j $array,$merge   logs: ${logDir}   result: ${out}"`,
    'echo "$array $merge" > "$here/submitted-jobs.txt"',
    '',
  ].join('\n');

  return { ingest, merge, submit, shardFiles, logDir };
}

export interface WrittenScripts {
  ingest: string;
  merge: string;
  submit: string;
  scripts: ClusterScripts;
}

/** Write ingest.sbatch, merge.sbatch and submit.sh (executable) into folder. */
export function writeClusterScripts(o: ClusterScriptOptions, folder: string): WrittenScripts {
  const scripts = clusterScripts(o);
  mkdirSync(folder, { recursive: true });
  const at = (f: string) => path.join(path.resolve(folder), f);
  const written = { ingest: at('ingest.sbatch'), merge: at('merge.sbatch'), submit: at('submit.sh') };
  refuseClashes(
    [
      { what: 'the cohort', file: o.cohort },
      { what: '--out', file: o.out },
    ],
    Object.values(written).map((file) => ({ what: 'the script', file })),
  );
  writeFileReplacing(written.ingest, scripts.ingest);
  writeFileReplacing(written.merge, scripts.merge);
  writeFileReplacing(written.submit, scripts.submit);
  for (const f of Object.values(written)) chmodSync(f, 0o755);
  return { ...written, scripts };
}
