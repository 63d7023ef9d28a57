/**
 * Electrode positions land in the database: a BIDS folder whose recordings carry an
 * `_electrodes.tsv` with its `_coordsystem.json` (BIDS specification, EEG: "Electrodes
 * description", "Coordinate System JSON"; EEGCoordinateUnits m, cm or mm), one in millimetres
 * and one in metres; a cohort table with a `positions` column and `--positions`; a 10-10 cohort
 * without a file keeps the template positions. Size: 3 + 2 recordings of 6 channels × 8 epochs at
 * 128 Hz, fits off.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance, type DuckDBConnection } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest } from '../../ingest/run.ts';
import { electrodePosition } from '../../src/core/montage/positions.ts';
import { writeFixtureEdf } from './fixture.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-positions-'));
const LABELS = ['EEG E1', 'EEG E2', 'EEG E3', 'EEG E4', 'EEG E5', 'EEG C3'];
// five electrodes on a sphere of radius 90 mm about the origin (E5: 54² + 72² = 90²), so the
// fitted head centre is the origin and each direction is the position over 90 mm (geometry)
const MM: [string, number, number, number][] = [
  ['E1', 0, 0, 90],
  ['E2', -90, 0, 0],
  ['E3', 0, 90, 0],
  ['E4', 90, 0, 0],
  ['E5', 54, 0, 72],
];
const tsv = (scale: number) => 'name\tx\ty\tz\ttype\n' + MM.map(([n, x, y, z]) => [n, x * scale, y * scale, z * scale, 'cup'].join('\t')).join('\n') + '\n';
const params = { fit: null, references: ['recorded' as const] };
let inst: DuckDBInstance;
let c: DuckDBConnection;

const rows = async (db: string, sql: string) => {
  await c.run(`ATTACH '${db}' AS d (READ_ONLY)`);
  try {
    return (await c.runAndReadAll(sql)).getRowObjectsJS() as Record<string, any>[];
  } finally {
    await c.run('DETACH d');
  }
};
const channelsOf = (db: string, subject: string) =>
  rows(
    db,
    `SELECT ch.channel, ch.x, ch.y, ch.z, ch.position_source, ch.x_m, ch.y_m, ch.z_m FROM d.channels ch JOIN d.recordings r USING (recording_id) WHERE r.subject = '${subject}' ORDER BY ch.channel`,
  );

beforeAll(async () => {
  inst = await DuckDBInstance.create(':memory:');
  c = await inst.connect();
  const bids = path.join(dir, 'bids');
  const put = (rel: string, text: string) => {
    mkdirSync(path.dirname(path.join(bids, rel)), { recursive: true });
    writeFileSync(path.join(bids, rel), text);
  };
  put('dataset_description.json', JSON.stringify({ Name: 'invented', BIDSVersion: '1.9.0' }));
  put('participants.tsv', 'participant_id\tgroup\nsub-01\ta\nsub-02\tb\nsub-03\tb\n');
  for (const [s, unit, scale] of [
    ['01', 'mm', 1],
    ['02', 'm', 0.001],
    ['03', null, 0],
  ] as const) {
    const base = `sub-${s}/eeg/sub-${s}`;
    mkdirSync(path.join(bids, `sub-${s}/eeg`), { recursive: true });
    await writeFixtureEdf(path.join(bids, `${base}_task-sleep_eeg.edf`), { seed: Number(s), fsHz: 128, nEpochs: 8, labels: LABELS });
    put(
      `${base}_task-sleep_eeg.json`,
      JSON.stringify({ TaskName: 'sleep', SamplingFrequency: 128, EEGReference: 'n/a', PowerLineFrequency: 50, SoftwareFilters: 'n/a' }),
    );
    if (unit === null) continue; // sub-03: no electrodes file
    put(`${base}_electrodes.tsv`, tsv(scale));
    put(`${base}_coordsystem.json`, JSON.stringify({ EEGCoordinateSystem: 'CapTrak', EEGCoordinateUnits: unit }));
  }
  await runIngest(bids, path.join(dir, 'bids.duckdb'), { jobs: 2, params });

  // a table: s1 names its file in the positions column; s2 takes --positions (cm, as --positions-unit says)
  const table = path.join(dir, 'table');
  mkdirSync(table, { recursive: true });
  for (const s of ['s1', 's2']) await writeFixtureEdf(path.join(table, `${s}.edf`), { seed: s === 's1' ? 7 : 8, fsHz: 128, nEpochs: 8, labels: LABELS });
  writeFileSync(path.join(table, 'own.tsv'), tsv(0.1));
  writeFileSync(path.join(table, 'shared.tsv'), tsv(0.1).replace('E1\t0\t0\t9', 'E1\t0\t9\t0').replace('E3\t0\t9\t0', 'E3\t0\t0\t9'));
  writeFileSync(path.join(table, 'cohort.tsv'), 'subject\trecording\tpositions\ns1\ts1.edf\town.tsv\ns2\ts2.edf\tn/a\n');
  await runIngest(path.join(table, 'cohort.tsv'), path.join(dir, 'table.duckdb'), {
    jobs: 2,
    params,
    positions: path.join(table, 'shared.tsv'),
    positionsUnit: 'cm',
  });
}, 120_000);

afterAll(() => {
  c?.closeSync();
  inst?.closeSync();
  rmSync(dir, { recursive: true, force: true });
});

describe('electrode positions in the database', () => {
  it('stores a BIDS electrodes file in mm and in m as the same metres and unit directions', async () => {
    for (const subject of ['01', '02']) {
      const got = await channelsOf(path.join(dir, 'bids.duckdb'), subject);
      const e5 = got.find((r) => r.channel === 'E5')!;
      // 54 mm = 0.054 m; direction 54/90 = 0.6, 72/90 = 0.8
      expect(e5.position_source).toBe('file');
      expect(e5.x_m).toBeCloseTo(0.054, 12);
      expect(e5.z_m).toBeCloseTo(0.072, 12);
      expect(e5.x).toBeCloseTo(0.6, 9);
      expect(e5.y).toBeCloseTo(0, 9);
      expect(e5.z).toBeCloseTo(0.8, 9);
      const e2 = got.find((r) => r.channel === 'E2')!;
      expect(e2.x).toBeCloseTo(-1, 9);
      // C3 is not in the file: the 10-10 template, no metres
      const c3 = got.find((r) => r.channel === 'C3')!;
      expect(c3).toMatchObject({ position_source: 'template', x_m: null });
      expect(c3.x).toBeCloseTo(electrodePosition('C3')!.x, 6);
    }
  });

  it('keeps the template for 10-10 names and leaves other names without a position when there is no file, with a warning', async () => {
    const got = await channelsOf(path.join(dir, 'bids.duckdb'), '03');
    expect(got.find((r) => r.channel === 'E1')).toMatchObject({ position_source: 'none', x: null, y: null, z: null, x_m: null });
    expect(got.find((r) => r.channel === 'C3')).toMatchObject({ position_source: 'template' });
    const warnings = await rows(
      path.join(dir, 'bids.duckdb'),
      `SELECT w.message FROM d.warnings w JOIN d.recordings r USING (recording_id) WHERE r.subject = '03' AND w.field = 'positions'`,
    );
    expect(warnings.map((w) => w.message)).toEqual([
      'channels E1, E2, E3, E4, E5 have no position (no positions file and not 10-10 names); spatial contrasts over them need a neighbour table',
    ]);
  });

  it('takes a cohort table positions column before --positions, in the unit --positions-unit gives', async () => {
    const db = path.join(dir, 'table.duckdb');
    const own = (await channelsOf(db, 's1')).find((r) => r.channel === 'E1')!;
    const shared = (await channelsOf(db, 's2')).find((r) => r.channel === 'E1')!;
    // 9 cm = 0.09 m; own.tsv has E1 at the vertex, shared.tsv at the nose
    expect(own).toMatchObject({ position_source: 'file' });
    expect(own.z_m).toBeCloseTo(0.09, 12);
    expect(own.z).toBeCloseTo(1, 9);
    expect(shared.y_m).toBeCloseTo(0.09, 12);
    expect(shared.y).toBeCloseTo(1, 9);
  });
});
