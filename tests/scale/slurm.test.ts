import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest } from '../../ingest/run.ts';
import { openStore } from '../../ingest/store/database.ts';
import { cohortQualityPass } from '../../ingest/store/merge.ts';
import { shellQuote, writeClusterScripts } from '../../src/cluster/slurm-script.ts';
import { compareDatabases, firstBitDifference, queryRows, spectraBits, writeSmallCohort } from './helpers.ts';
import { startSlurm, waitFor, type SlurmCluster } from './slurm-harness.ts';

// A real single-node Slurm (STANDARDS.md, "A real single-node Slurm for tests"): the generated
// job array (4 tasks, each the real `bandwise ingest --shard K/4` with the default parameters,
// aperiodic fits included) and the dependent merge job, against a single-process ingest of the
// same invented cohort (8 recordings, 5 EEG channels at 128 Hz, 12 min each).
const dir = mkdtempSync(path.join(tmpdir(), 'bw-slurm-'));
const at = (f: string) => path.join(dir, f);
const repo = path.resolve(import.meta.dirname, '../..');
// the real commands, run from the sources (the commands of src/cli/main.ts)
const bandwise = [process.execPath, path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'tests/scale/cli-entry.ts')].map(shellQuote).join(' ');
let cluster: SlurmCluster | null = null;
let table = '';
let jobs: string[] = [];

beforeAll(async () => {
  table = await writeSmallCohort(at('cohort'), 8, 24);
  cluster = await startSlurm();
}, 120_000);

afterAll(async () => {
  try {
    if (cluster && jobs.length) spawnSync('scancel', jobs, { env: cluster.env });
  } finally {
    await cluster?.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

/** scontrol's view of a job (finished jobs stay for MinJobAge, 300 s by default): one record per (array) task. */
function jobRecords(id: string): Record<string, string>[] {
  const text = cluster!.client('scontrol', ['show', 'job', '-o', id]);
  return text
    .trim()
    .split('\n')
    .map((line) =>
      Object.fromEntries(
        line
          .trim()
          .split(/\s+/)
          .map((kv) => [kv.slice(0, kv.indexOf('=')), kv.slice(kv.indexOf('=') + 1)]),
      ),
    );
}

describe('Slurm job array ingest', () => {
  it('4 array tasks of bandwise ingest --shard K/4, then the dependent merge, equal a single-process ingest', async () => {
    const merged = at('out/cohort.duckdb');
    const w = writeClusterScripts(
      { cohort: table, out: merged, shards: 4, partition: cluster!.partition, cpus: 1, mem: '1G', time: '15', command: bandwise },
      at('out/scripts'),
    );
    expect(w.scripts.ingest).toMatch(/^#SBATCH --array=1-4$/m);
    const submitted = spawnSync('bash', [w.submit], { env: cluster!.env, encoding: 'utf8' });
    expect(submitted.status, submitted.stderr).toBe(0);
    expect(submitted.stdout).toMatch(/ingest array job \d+ \(4 tasks\) and merge job \d+/);
    jobs = readFileSync(at('out/scripts/submitted-jobs.txt'), 'utf8').trim().split(' ');
    const [arrayId, mergeId] = jobs;

    // meanwhile, the single-process ingest of the whole cohort, plus the cohort pass the merge runs
    await runIngest(table, at('single.duckdb'), { jobs: 1 });
    const store = await openStore(at('single.duckdb'));
    await cohortQualityPass(store);
    await store.close();

    const pending = () => cluster!.client('squeue', ['-h', '-j', `${arrayId},${mergeId}`, '-o', '%i %T']).trim();
    await waitFor(() => pending() === '', 240_000, 'the array and merge jobs to leave the queue', 500).catch((e: Error) => {
      throw new Error(`${e.message}\nqueue: ${pending()}\n${cluster!.logs()}`);
    });
    const tasks = jobRecords(arrayId);
    const logs = readdirSync(w.scripts.logDir).sort();
    const err = (f: string) => (existsSync(path.join(w.scripts.logDir, f)) ? readFileSync(path.join(w.scripts.logDir, f), 'utf8') : '');
    const why = `${tasks.map((t) => `${t.JobId}_${t.ArrayTaskId} ${t.JobState} ${t.ExitCode}`).join('; ')}\n${logs.map((f) => `${f}: ${err(f).slice(-400)}`).join('\n')}`;
    expect(tasks.map((t) => `${t.ArrayTaskId}:${t.JobState}:${t.ExitCode}`).sort(), why).toEqual([
      '1:COMPLETED:0:0',
      '2:COMPLETED:0:0',
      '3:COMPLETED:0:0',
      '4:COMPLETED:0:0',
    ]);
    const [mergeJob] = jobRecords(mergeId);
    expect(`${mergeJob.JobState}:${mergeJob.ExitCode}`, why).toBe('COMPLETED:0:0');
    expect(mergeJob.Dependency).toBeDefined();
    // the merge started only after every task ended (afterok dependency); times have 1-s resolution
    for (const t of tasks) expect(Date.parse(mergeJob.StartTime)).toBeGreaterThanOrEqual(Date.parse(t.EndTime));
    // logs per task: ingest-<array job>_<task>.out/.err, and the merge's
    for (let k = 1; k <= 4; k++) expect(logs).toContain(`ingest-${arrayId}_${k}.out`);
    expect(logs).toContain(`merge-${mergeId}.out`);
    expect(err(`merge-${mergeId}.out`)).toMatch(/merged 4 shard\(s\) into .*cohort\.duckdb: 8 recordings/);

    // each shard file holds its share: 2 recordings, labelled K/4
    for (let k = 1; k <= 4; k++) {
      const rows = await queryRows(w.scripts.shardFiles[k - 1], 'SELECT (SELECT shard FROM runs) AS shard, (SELECT count(*)::INTEGER FROM recordings) AS n');
      expect(rows).toEqual([{ shard: `${k}/4`, n: 2 }]);
    }
    const diff = await compareDatabases(at('single.duckdb'), merged);
    for (const d of diff) {
      expect(d, d.table).toMatchObject({ differing: 0 });
      expect(d.rowsB, d.table).toBe(d.rowsA);
    }
    const rows = Object.fromEntries(diff.map((d) => [d.table, d.rowsA]));
    expect(rows.recordings).toBe(8);
    expect(rows.spectra).toBe(8 * 5 * 5 * 2);
    expect(rows.aperiodic).toBe(8 * 5 * 5 * 2);
    expect(rows.quality).toBeGreaterThan(0);
    expect(firstBitDifference(await spectraBits(at('single.duckdb')), await spectraBits(merged))).toBeNull();
  }, 400_000);
});
