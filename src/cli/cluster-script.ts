/**
 * `bandwise cluster-script <cohort> --out cohort.duckdb --shards N [resources] [-- ingest options]`:
 * writes the Slurm scripts of a sharded ingest (a job array, one task per shard, and the merge
 * as a dependent job) plus submit.sh, and says how to submit them. Nothing is submitted.
 */
import path from 'node:path';
import { Command, InvalidArgumentError } from 'commander';
import { EXIT_OUTPUT_REFUSED, OutputClashError } from '../files/output-files.ts';
import type { ClusterScriptOptions } from '../cluster/slurm-script.ts';

/** The command's options: the scripts' own, with the folder of the scripts and how a task starts bandwise. */
type Flags = Omit<ClusterScriptOptions, 'cohort' | 'command' | 'ingestOptions'> & { scriptDir?: string; bandwise?: string };

const whole = (name: string) => (v: string) => {
  const x = Number(v);
  if (!Number.isSafeInteger(x) || x < 1) throw new InvalidArgumentError(`invalid ${name}: ${v} (a whole number ≥ 1)`);
  return x;
};

export function register(program: Command): void {
  program
    .command('cluster-script')
    .description(
      'Write Slurm scripts that ingest a cohort as a job array (task K of N runs `bandwise ingest --shard K/N` ' +
        'into its own shard database, logs per task) and then merge the shards in a job that waits for every ' +
        'task to succeed. Writes ingest.sbatch, merge.sbatch and submit.sh; submits nothing.',
    )
    .argument('<cohort>', 'cohort table (.tsv/.csv) or BIDS folder')
    .argument('[ingest-options...]', 'more `bandwise ingest` options, after --  (e.g. -- --reference recorded,average)')
    .requiredOption('--out <file>', 'merged cohort database the merge job writes')
    .requiredOption('--shards <N>', 'number of shards = array tasks', whole('shards'))
    .option('--script-dir <folder>', 'where to write the scripts (default: <out without .duckdb>.slurm)')
    .option('--shard-dir <folder>', 'where the tasks write shard databases (default: <out without .duckdb>.shards)')
    .option('--log-dir <folder>', 'per-task logs ingest-<job>_<task>.out/.err (default: <shard-dir>/logs)')
    .option('--partition <name>', 'Slurm partition (default: the cluster default)')
    .option('--cpus <n>', 'CPUs per task; the ingest runs one worker thread per CPU', whole('cpus'), 1)
    .option('--mem <size>', 'memory per task, e.g. 4G (default: the cluster default)')
    .option('--time <limit>', 'time limit per task, e.g. 02:00:00 or 1-00:00:00 (default: the partition limit)')
    .option('--job-name <name>', 'job name prefix (default: bandwise)')
    .option('--bandwise <command>', 'how a task starts bandwise, shell words (default: this node and this install, absolute paths)')
    .addHelpText(
      'after',
      '\nThe nodes must see the same paths (shared file system). Exit status 3 of a task (some recordings\n' +
        'failed, the rest stored) still lets the merge run; the failures are in ingest_errors.\n\n' +
        'Example:\n  bandwise cluster-script cohort.tsv --out cohort.duckdb --shards 20 --cpus 4 --mem 8G --time 04:00:00\n' +
        '  bash cohort.slurm/submit.sh',
    )
    .action(async (cohort: string, ingestOptions: string[], flags: Flags, cmd: Command) => {
      const { writeClusterScripts } = await import('../cluster/slurm-script.ts'); // loaded on use
      const out = path.resolve(flags.out);
      const folder = path.resolve(flags.scriptDir ?? `${out.replace(/\.duckdb$/i, '')}.slurm`);
      try {
        const w = writeClusterScripts(
          {
            cohort,
            out,
            shards: flags.shards,
            shardDir: flags.shardDir,
            logDir: flags.logDir,
            partition: flags.partition,
            cpus: flags.cpus,
            mem: flags.mem,
            time: flags.time,
            jobName: flags.jobName,
            command: flags.bandwise,
            ingestOptions,
          },
          folder,
        );
        console.log(`wrote ${w.ingest}\n      ${w.merge}\n      ${w.submit}`);
        console.log(`submit with:\n  bash ${w.submit}\n(or by hand: sbatch --parsable ${w.ingest}, then sbatch --dependency=afterok:<that job id> ${w.merge})`);
        console.log(`shard databases: ${path.dirname(w.scripts.shardFiles[0])}, logs: ${w.scripts.logDir}, result: ${out}`);
      } catch (e) {
        cmd.error(`bandwise cluster-script: ${(e as Error).message}`, { exitCode: e instanceof OutputClashError ? EXIT_OUTPUT_REFUSED : 1 });
      }
    });
}
