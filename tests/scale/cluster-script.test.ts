import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { clusterScripts, ClusterScriptError, shellQuote } from '../../src/cluster/slurm-script.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-cluster-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const repo = path.resolve(import.meta.dirname, '../..');

describe('cluster scripts', () => {
  it('shellQuote survives bash: each word comes back as it went in (bash itself is the reference)', () => {
    const words = ["it's", 'a b', '$HOME', '`id`', '"q"', 'x;y', 'back\\slash', 'new\nline', '', '*', 'plain-word_1.duckdb', 'ünï'];
    const out = spawnSync('bash', ['-c', `printf '%s\\0' ${words.map(shellQuote).join(' ')}`], { encoding: 'utf8' });
    expect(out.stdout.split('\0').slice(0, -1)).toEqual(words);
  });

  it('the array script has one task per shard, resources, per-task logs; the merge lists every shard file', () => {
    const s = clusterScripts({
      cohort: 'cohort.tsv',
      out: '/data/run/cohort.duckdb',
      shards: 3,
      partition: 'long',
      cpus: 4,
      mem: '8G',
      time: '1-00:00:00',
      command: 'bandwise',
      ingestOptions: ['--reference', 'recorded,average'],
    });
    expect(s.ingest).toMatch(/^#SBATCH --array=1-3$/m);
    expect(s.ingest).toMatch(/^#SBATCH --partition=long$/m);
    expect(s.ingest).toMatch(/^#SBATCH --cpus-per-task=4$/m);
    expect(s.ingest).toMatch(/^#SBATCH --mem=8G$/m);
    expect(s.ingest).toMatch(/^#SBATCH --time=1-00:00:00$/m);
    expect(s.ingest).toMatch(/^#SBATCH --output=\/data\/run\/cohort\.shards\/logs\/ingest-%A_%a\.out$/m);
    expect(s.ingest).toContain(`--shard "$K/$N" --jobs "\${SLURM_CPUS_PER_TASK:-1}" --quiet --reference recorded,average`);
    expect(s.ingest).toContain(`ingest ${path.resolve('cohort.tsv')} --out /data/run/cohort.shards/shard-"$K"-of-"$N".duckdb`);
    expect(s.shardFiles).toEqual([1, 2, 3].map((k) => `/data/run/cohort.shards/shard-${k}-of-3.duckdb`));
    for (const f of s.shardFiles) expect(s.merge).toContain(f);
    expect(s.merge).toContain('--out /data/run/cohort.duckdb');
    expect(s.submit).toContain('--dependency=afterok:"$array"');
    // every script parses as bash (bash -n: syntax check only)
    for (const text of [s.ingest, s.merge, s.submit]) expect(spawnSync('bash', ['-n'], { input: text }).status).toBe(0);
  });

  it('refuses bad resources and options the scripts set themselves', () => {
    const base = { cohort: 'c.tsv', out: 'o.duckdb', command: 'bandwise' };
    expect(() => clusterScripts({ ...base, shards: 0 })).toThrow(ClusterScriptError);
    expect(() => clusterScripts({ ...base, shards: 0 })).toThrow(/--shards must be a whole number ≥ 1, got 0/);
    expect(() => clusterScripts({ ...base, shards: 2, mem: 'lots' })).toThrow(/--mem 'lots'/);
    expect(() => clusterScripts({ ...base, shards: 2, time: '25 hours' })).toThrow(/--time '25 hours'/);
    expect(() => clusterScripts({ ...base, shards: 2, partition: 'a b' })).toThrow(/--partition 'a b'/);
    expect(() => clusterScripts({ ...base, shards: 2, cpus: 1.5 })).toThrow(/--cpus must be a whole number/);
    expect(() => clusterScripts({ ...base, shards: 2, ingestOptions: ['--shard', '1/2'] })).toThrow(/ingest option --shard is set by the scripts/);
    expect(() => clusterScripts({ ...base, shards: 2, logDir: '/tmp/my logs' })).toThrow(/#SBATCH lines cannot carry/);
  });

  it('bandwise cluster-script writes the three scripts (executable) and prints how to submit', () => {
    const out = path.join(dir, 'res', 'cohort.duckdb');
    const r = spawnSync(
      process.execPath,
      [
        path.join(repo, 'bin/run-ts.mjs'),
        path.join(repo, 'tests/scale/cli-entry.ts'),
        'cluster-script',
        path.join(dir, 'cohort.tsv'),
        '--out',
        out,
        '--shards',
        '5',
        '--time',
        '30',
        '--',
        '--no-fit',
      ],
      { encoding: 'utf8' },
    );
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/submit with:\n {2}bash .*res\/cohort\.slurm\/submit\.sh/);
    const ingest = readFileSync(path.join(dir, 'res', 'cohort.slurm', 'ingest.sbatch'), 'utf8');
    expect(ingest).toMatch(/^#SBATCH --array=1-5$/m);
    expect(ingest).toMatch(/--quiet --no-fit$/m);
    expect(statSync(path.join(dir, 'res', 'cohort.slurm', 'submit.sh')).mode & 0o111).not.toBe(0);
    const bad = spawnSync(
      process.execPath,
      [
        path.join(repo, 'bin/run-ts.mjs'),
        path.join(repo, 'tests/scale/cli-entry.ts'),
        'cluster-script',
        'c.tsv',
        '--out',
        out,
        '--shards',
        '2',
        '--mem',
        'lots',
      ],
      { encoding: 'utf8' },
    );
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(/bandwise cluster-script: --mem 'lots'/);
  });
});
