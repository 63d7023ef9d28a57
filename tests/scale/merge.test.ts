import { copyFileSync, existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest } from '../../ingest/run.ts';
import { openStore, readHeaderStorageNumber } from '../../ingest/store/database.ts';
import { cohortQualityPass, MergeError, mergeShards, parameterDifferences } from '../../ingest/store/merge.ts';
import { runPython } from '../helpers/python.ts';
import { compareDatabases, firstBitDifference, queryRows, spectraBits, writeSmallCohort } from './helpers.ts';

// An invented cohort of 6 recordings (5 EEG channels at 128 Hz, 12 min each), ingested once
// whole and once as 3 shards; the merged shards must equal the whole ingest. Without the
// aperiodic fits to keep it quick (tests/scale/slurm.test.ts merges shards with fits).
const dir = mkdtempSync(path.join(tmpdir(), 'bw-merge-'));
const at = (f: string) => path.join(dir, f);
const repo = path.resolve(import.meta.dirname, '../..');
let table = '';
const params = { fit: null };
const shards = [1, 2, 3].map((k) => at(`shard-${k}.duckdb`));

async function exec(db: string, sql: string): Promise<void> {
  const inst = await DuckDBInstance.create(db);
  const c = await inst.connect();
  await c.run(sql);
  await c.run('CHECKPOINT');
  c.closeSync();
  inst.closeSync();
}

beforeAll(async () => {
  table = await writeSmallCohort(at('cohort'), 6, 24);
  await runIngest(table, at('single.duckdb'), { jobs: 1, params });
  const store = await openStore(at('single.duckdb'));
  await cohortQualityPass(store);
  await store.close();
  for (let k = 1; k <= 3; k++) await runIngest(table, shards[k - 1], { jobs: 1, params, shard: { k, n: 3 } });
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('mergeShards', () => {
  it('merges 3 shards into a database equal to the single-process ingest plus its cohort pass', async () => {
    const summary = await mergeShards(shards, at('merged.duckdb'));
    expect(summary).toMatchObject({ shards: 3, recordings: 6, duplicatesDropped: 0, missingShards: [] });
    expect(existsSync(at('merged.duckdb.merging'))).toBe(false);
    const diff = await compareDatabases(at('single.duckdb'), at('merged.duckdb'));
    for (const d of diff) {
      expect(d, d.table).toMatchObject({ differing: 0 });
      expect(d.rowsB, d.table).toBe(d.rowsA);
    }
    const byTable = Object.fromEntries(diff.map((d) => [d.table, d.rowsA]));
    // 5 channels × 5 stages × 2 averagings per recording (docs/design.md: mean and median stored)
    expect(byTable.spectra).toBe(6 * 5 * 5 * 2);
    expect(byTable.participants).toBe(6);
    expect(byTable.runs).toBe(1);
    expect(firstBitDifference(await spectraBits(at('single.duckdb')), await spectraBits(at('merged.duckdb')))).toBeNull();
    // storage ≤ v1.4 (header number 67 or less; DuckDB docs "Storage Versions and Format")
    expect(readHeaderStorageNumber(at('merged.duckdb'))).toBeLessThanOrEqual(67);
    const runs = await queryRows(at('merged.duckdb'), 'SELECT shard, finished_at IS NOT NULL AS done FROM runs');
    expect(runs).toEqual([{ shard: null, done: true }]);
  });

  it('the cohort pass after the merge equals a robust z of RMS log10 distances computed by numpy', async () => {
    const rows = await queryRows(
      at('merged.duckdb'),
      `SELECT s.recording_id, s.power, q.value FROM spectra s JOIN quality q
          ON q.recording_id = s.recording_id AND q.channel = s.channel AND q.stage = s.stage AND q.reference = s.reference
        WHERE q.metric = 'cohort-distance' AND s.channel = 'C4' AND s.stage = 'N2' AND s.averaging = 'mean' ORDER BY s.recording_id`,
    );
    expect(rows).toHaveLength(6);
    const flat = rows.flatMap((r) => r.power as number[]);
    // numpy: median over recordings per bin of log10 P on 1–40 Hz, RMS distance, (d − median)/(1.4826 MAD)
    const z = runPython<number[]>(
      `p = numpy.fromfile(inputs['p']).reshape(6, -1)
f = numpy.arange(p.shape[1]) * 0.25
L = numpy.log10(p[:, (f >= 1) & (f <= 40)])
d = numpy.sqrt(numpy.mean((L - numpy.median(L, axis=0)) ** 2, axis=1))
print(json.dumps(list((d - numpy.median(d)) / (1.4826 * numpy.median(numpy.abs(d - numpy.median(d)))))))`,
      { p: flat },
    );
    rows.forEach((r, i) => expect(Number(r.value)).toBeCloseTo(z[i], 9));
    expect(z.some((v) => Math.abs(v) > 0.1)).toBe(true); // the distances do vary
  });

  it('a recording stored identically in two inputs is kept once; stored differently, the merge is refused', async () => {
    const s = await mergeShards([at('single.duckdb'), shards[0]], at('dup.duckdb'));
    expect(s.recordings).toBe(6);
    expect(s.duplicatesDropped).toBe(2);
    for (const d of await compareDatabases(at('single.duckdb'), at('dup.duckdb'))) expect(d, d.table).toMatchObject({ differing: 0 });
    copyFileSync(shards[0], at('changed.duckdb'));
    await exec(
      at('changed.duckdb'),
      `UPDATE spectra SET power = list_transform(power, x -> x * 1.0001::FLOAT) WHERE channel = 'C3' AND stage = 'N2' AND averaging = 'mean'`,
    );
    await expect(mergeShards([at('single.duckdb'), at('changed.duckdb')], at('bad.duckdb'))).rejects.toThrow(
      /recording [0-9a-f]{16} \(sub0[14]\.edf\) is stored in both .*single\.duckdb and .*changed\.duckdb with different spectra rows/,
    );
    expect(existsSync(at('bad.duckdb'))).toBe(false);
    expect(existsSync(at('bad.duckdb.merging'))).toBe(false);
  });

  it('refuses shards written with other parameters, naming the differing keys', async () => {
    await runIngest(table, at('other-2.duckdb'), { jobs: 1, shard: { k: 2, n: 3 }, params: { fit: null, minEpochs: 3 } });
    const err = await mergeShards([shards[0], at('other-2.duckdb'), shards[2]], at('mix.duckdb')).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(MergeError);
    expect((err as Error).message).toMatch(/written with different parameters .* differing parameter keys: minEpochs\./);
    expect(parameterDifferences({ a: 1, b: { c: [1, 2], d: 'x' } }, { a: 1, b: { c: [1, 3], d: 'x', e: true } })).toEqual(['b.c', 'b.e']);
  });

  it('refuses missing shards (unless allowed), an unfinished shard, an existing output and a non-database', async () => {
    await expect(mergeShards(shards.slice(0, 2), at('part.duckdb'))).rejects.toThrow(/shard\(s\) 3\/3 missing/);
    const part = await mergeShards(shards.slice(0, 2), at('part.duckdb'), { allowMissingShards: true });
    expect(part.missingShards).toEqual(['3/3']);
    expect(await queryRows(at('part.duckdb'), 'SELECT shard FROM runs')).toEqual([{ shard: '1/3,2/3' }]);
    copyFileSync(shards[2], at('unfinished.duckdb'));
    await exec(at('unfinished.duckdb'), 'UPDATE runs SET finished_at = NULL');
    await expect(mergeShards([shards[0], shards[1], at('unfinished.duckdb')], at('u.duckdb'))).rejects.toThrow(/has not finished/);
    await expect(mergeShards(shards, at('merged.duckdb'))).rejects.toThrow(/exists already/);
    await expect(mergeShards([table], at('x.duckdb'))).rejects.toThrow(/not a DuckDB database file/);
    await expect(mergeShards([shards[0], shards[0]], at('x.duckdb'))).rejects.toThrow(/given twice/);
  });

  it('bandwise merge --help explains the command; the command merges and exits 0, refuses with exit 1', () => {
    const cli = (args: string[]) =>
      spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'tests/scale/cli-entry.ts'), ...args], { encoding: 'utf8' });
    const help = cli(['merge', '--help']);
    expect(help.status).toBe(0);
    expect(help.stdout).toMatch(/--out <file>/);
    expect(help.stdout).toMatch(/--allow-missing-shards/);
    const ok = cli(['merge', ...shards, '--out', at('cli.duckdb')]);
    expect(ok.status, ok.stderr).toBe(0);
    expect(ok.stdout).toMatch(/merged 3 shard\(s\) into .*cli\.duckdb: 6 recordings/);
    const refused = cli(['merge', shards[0], '--out', at('cli2.duckdb')]);
    expect(refused.status).toBe(1);
    expect(refused.stderr).toMatch(/bandwise merge: shard\(s\) 2\/3, 3\/3 missing/);
  });
});
