/**
 * Issue 22, "Done when", on the command line: a cohort whose channels are E-numbered (no 10-10
 * names) runs ingest with a positions file, compare over all channels, band-check and report;
 * without positions, compare refuses in one line naming the channels, runs with --neighbours, and
 * a channel average still runs. The labels are bare (E1, not "EEG E1"): the positions file makes
 * them EEG. Size: 8 invented recordings (4 per group: 70 relabellings) of 8 channels × 36
 * epochs at 128 Hz, 50 permutations. The net's sites are 8 idealised 10-10 positions
 * (positions.ts) on a 90-mm sphere, written as a BIDS-style electrodes TSV in mm.
 */
import { frontToBack } from '../../src/core/montage/channel-order.ts';
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { positionNeighbours } from '../../src/core/montage/adjacency.ts';
import { electrodePosition } from '../../src/core/montage/positions.ts';
import { writeFixtureEdf } from '../ingest/fixture.ts';

const repo = path.resolve(import.meta.dirname, '../..');
const dir = mkdtempSync(path.join(tmpdir(), 'bw-hd-cli-'));
const SITES = ['F3', 'Fz', 'F4', 'C3', 'Cz', 'C4', 'P3', 'P4'];
const NAMES = SITES.map((_, i) => `E${i + 1}`);
const cli = (args: string[]) =>
  spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), ...args], { encoding: 'utf8' });
const withPositions = path.join(dir, 'positions.duckdb');
const without = path.join(dir, 'bare.duckdb');

beforeAll(async () => {
  const rows: string[] = [];
  for (let s = 0; s < 8; s++) {
    await writeFixtureEdf(path.join(dir, `s${s}.edf`), { seed: 40 + s, fsHz: 128, nEpochs: 36, labels: NAMES, spindleUv: s < 4 ? 6 : 14 });
    rows.push(`s${s}\t${s < 4 ? 'a' : 'b'}\ts${s}.edf`);
  }
  writeFileSync(path.join(dir, 'cohort.tsv'), ['subject\tgroup\trecording', ...rows].join('\n') + '\n');
  const mm = SITES.map((site, i) => {
    const p = electrodePosition(site)!;
    return [NAMES[i], (90 * p.x).toFixed(3), (90 * p.y).toFixed(3), (90 * p.z).toFixed(3)].join('\t');
  });
  writeFileSync(path.join(dir, 'net.tsv'), ['name\tx\ty\tz', ...mm].join('\n') + '\n');
  const r = cli(['ingest', path.join(dir, 'cohort.tsv'), '--out', withPositions, '--jobs', '2', '--quiet', '--positions', path.join(dir, 'net.tsv')]);
  expect(r.status, r.stderr).toBe(0);
  // the same database as one ingested without a positions file (what the ingest test checks it stores)
  copyFileSync(withPositions, without);
  const inst = await DuckDBInstance.create(without);
  const c = await inst.connect();
  await c.run("UPDATE channels SET x = NULL, y = NULL, z = NULL, x_m = NULL, y_m = NULL, z_m = NULL, position_source = 'none'");
  c.closeSync();
  inst.closeSync();
}, 180_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

const compare = (db: string, extra: string[]) => {
  const out = path.join(dir, `r-${Math.random().toString(36).slice(2)}.json`);
  const r = cli(['compare', db, '--groups', 'a,b', '--fmin', '10', '--fmax', '16', '--permutations', '50', '--no-ledger', '--quiet', '--out', out, ...extra]);
  return { ...r, out };
};

describe('an E-numbered cohort from the command line', () => {
  it('compares over all channels with the neighbours of the stored positions, and reports them', () => {
    const r = compare(withPositions, []);
    expect(r.status, r.stderr).toBe(0);
    const result = JSON.parse(readFileSync(r.out, 'utf8'));
    // all channels front to back, then left to right, by their stored positions (src/core/montage/channel-order.ts)
    const order = frontToBack(NAMES, (n) => electrodePosition(SITES[NAMES.indexOf(n)]));
    expect(result.statistics.channels).toEqual(order);
    expect(result.channelLayout.neighbours).toBe('positions');
    // the graph is the one of the 10-10 sites the file gives (mm → unit sphere, rounded to 1 µm)
    const graph = positionNeighbours(
      order.map((n) => electrodePosition(SITES[NAMES.indexOf(n)])!),
      order,
    );
    expect(result.statistics.channelNeighbours).toEqual(graph);
    // 14 vs 6 µV spindles at 13.5 Hz in N2 on every channel: one positive cluster over the net
    expect(result.clusters[0].sign).toBe(1);
    expect(result.clusters[0].p).toBeLessThan(0.05);
    const report = path.join(dir, 'methods.md');
    const rep = cli(['report', r.out, '--out', report]);
    expect(rep.status, rep.stderr).toBe(0);
    expect(readFileSync(report, 'utf8')).toContain("Delaunay triangulation of the channels' electrode positions (from the recordings' positions files");
    const band = cli([
      'band-check',
      withPositions,
      '--band',
      '12-15',
      '--groups',
      'a,b',
      '--permutations',
      '50',
      '--no-ledger',
      '--quiet',
      '--out',
      path.join(dir, 'band.json'),
    ]);
    expect(band.status, band.stderr).toBe(0);
  });

  it('refuses without positions in one line naming the channels, and runs with a neighbour table or a channel average', () => {
    const refused = compare(without, []);
    expect(refused.status).toBe(1);
    expect(refused.stderr).toBe(
      'bandwise compare: channels E1, E2, E3, E4, E5, E6, E7, E8 have no position and no neighbour table: store positions at ingest (a BIDS _electrodes.tsv, --positions or a positions column), give neighbours (--neighbours FILE, or "neighbours" in the contrast), or average the channels (--channel-average)\n',
    );
    // a chain E1 – E2 – … – E8
    writeFileSync(path.join(dir, 'chain.tsv'), NAMES.map((n, i) => `${n}\t${i + 1 < NAMES.length ? NAMES[i + 1] : ''}`).join('\n') + '\n');
    const table = compare(without, ['--neighbours', path.join(dir, 'chain.tsv')]);
    expect(table.status, table.stderr).toBe(0);
    const result = JSON.parse(readFileSync(table.out, 'utf8'));
    expect(result.channelLayout.neighbours).toBe('table');
    expect(result.statistics.channelNeighbours[4]).toEqual([3, 5]);
    const averaged = compare(without, ['--channel-average']);
    expect(averaged.status, averaged.stderr).toBe(0);
    const bad = compare(without, ['--neighbours', path.join(dir, 'nope.tsv')]);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toBe(`--neighbours ${path.join(dir, 'nope.tsv')} cannot be read: ENOENT\n`);
  });
});
