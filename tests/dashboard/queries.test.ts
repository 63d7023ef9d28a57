// The dashboard's named queries, run by duckdb-wasm (blocking node build, the browser's engine)
// on the fixture database. Expected values are computed independently: group sizes from the
// fixture's participant list; sleep architecture by plain loops over the hypnogram read with
// @duckdb/node-api (another DuckDB build), using the usual scoring definitions (common practice:
// total sleep time N1+N2+N3+R, efficiency = TST / time in bed, sleep onset latency to the first
// sleep epoch, REM latency from sleep onset, WASO = W between sleep onset and the last sleep
// epoch); spectra compared value by value with node-api's reading of the same FLOAT[] lists.
import { DuckDBInstance } from '@duckdb/node-api';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  cohortSchema,
  groupSizes,
  groupingColumns,
  ingestErrors,
  participants,
  recordingsOverview,
  runs,
  spectraMatrix,
  type CohortSchema,
} from '../../src/dashboard/db/queries.ts';
import { FIXTURE_CHANNELS, FIXTURE_PARAMETERS, FIXTURE_PARTICIPANTS, FIXTURE_SPECTRUM, makeFixtureDb } from '../fixtures/make-fixture-db.ts';
import { wasmClientFor } from './wasm-client.ts';

describe('named queries on the fixture database (duckdb-wasm)', () => {
  let dir: string;
  let file: string;
  let client: Awaited<ReturnType<typeof wasmClientFor>>;
  let schema: CohortSchema;
  const hypnograms = new Map<number, { onset: number; stage: string }[]>();
  const powers: number[][] = [];

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-queries-'));
    file = path.join(dir, 'fixture.duckdb');
    await makeFixtureDb(file);
    const instance = await DuckDBInstance.create(file, { access_mode: 'READ_ONLY' });
    const c = await instance.connect();
    const epochs = await c.runAndReadAll('SELECT recording_id, onset_s, stage FROM epochs ORDER BY recording_id, onset_s');
    for (const [id, onset, stage] of epochs.getRows()) {
      const list = hypnograms.get(Number(id)) ?? [];
      list.push({ onset: Number(onset), stage: String(stage) });
      hypnograms.set(Number(id), list);
    }
    const spectra = await c.runAndReadAll(
      `SELECT power FROM spectra WHERE stage = 'N2' AND reference = 'recorded' AND averaging = 'mean' ORDER BY recording_id, channel`,
    );
    for (const [p] of spectra.getRowsJson()) powers.push((p as number[]).map(Number));
    c.closeSync();
    instance.closeSync();
    client = await wasmClientFor(file);
    schema = await cohortSchema(client);
  });

  afterAll(() => {
    client.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('reads the schema of the attached database', () => {
    expect(schema.has('spectra', 'power', 'n_bins')).toBe(true);
    expect(schema.columns('spectra').find((c) => c.name === 'power')?.type).toBe('FLOAT[]');
    expect(schema.has('spectra', 'no_such_column')).toBe(false);
    expect(groupingColumns(schema)).toEqual(['group', 'sex']);
  });

  it('runs: parameters JSON parsed', async () => {
    const r = await runs(client);
    expect(r).toHaveLength(1);
    expect(r[0].runId).toBe('run-1');
    expect(r[0].parameters).toEqual(FIXTURE_PARAMETERS);
    expect(r[0].startedAt).toBe('2026-01-05 09:00:00');
  });

  it('group sizes match the participant list', async () => {
    const sizes = await groupSizes(client, schema, 'group');
    const expected = ['control', 'patient'].map((g) => {
      const members = FIXTURE_PARTICIPANTS.filter((p) => p.group === g);
      return { group: g, subjects: members.length, recordings: members.length, withSpectra: members.filter((p) => p.ingested).length };
    });
    expect(sizes).toEqual(expected);
    const bySex = await groupSizes(client, schema, 'sex');
    expect(bySex.map((s) => s.subjects)).toEqual([
      FIXTURE_PARTICIPANTS.filter((p) => p.sex === 'F').length,
      FIXTURE_PARTICIPANTS.filter((p) => p.sex === 'M').length,
    ]);
    const all = await groupSizes(client, schema, null);
    expect(all).toEqual([{ group: 'all', subjects: 7, recordings: 7, withSpectra: 6 }]);
    await expect(groupSizes(client, schema, 'nope')).rejects.toThrow(/participants has no column "nope"/);
  });

  it('participants keep their columns, numbers as numbers', async () => {
    const p = await participants(client, schema);
    expect(p.columns.map((c) => c.name)).toEqual(['subject', 'group', 'age', 'sex']);
    expect(p.rows).toEqual(FIXTURE_PARTICIPANTS.map((x) => ({ subject: x.subject, group: x.group, age: x.age, sex: x.sex })));
  });

  it('recordings overview: sampling rate, duration and sleep architecture', async () => {
    const rows = await recordingsOverview(client, schema, 'group');
    expect(rows).toHaveLength(FIXTURE_PARTICIPANTS.length);
    for (const [i, fx] of FIXTURE_PARTICIPANTS.entries()) {
      const row = rows[i];
      expect(row.subject).toBe(fx.subject);
      expect(row.group).toBe(fx.group);
      if (!fx.ingested) {
        expect(row.duration_min).toBeNull();
        expect(row.fs_hz).toBeNull();
        expect(row.tst_min).toBeNull();
        continue;
      }
      expect(row.duration_min).toBeCloseTo((fx.nEpochs * 30) / 60, 9);
      expect(row.fs_hz).toBe(String(fx.fsHz));
      expect(row.n_channels).toBe(FIXTURE_CHANNELS.length);
      const h = hypnograms.get(Number(row.recording_id))!;
      const isSleep = (s: string) => s === 'N1' || s === 'N2' || s === 'N3' || s === 'R';
      const count = (s: string) => h.filter((e) => e.stage === s).length;
      const tst = h.filter((e) => isSleep(e.stage)).length * 0.5;
      const first = h.findIndex((e) => isSleep(e.stage));
      let last = h.length - 1;
      while (!isSleep(h[last].stage)) last--;
      let waso = 0;
      for (let e = first + 1; e < last; e++) if (h[e].stage === 'W') waso += 0.5;
      const firstR = h.findIndex((e) => e.stage === 'R');
      expect(row.w_min).toBe(count('W') * 0.5);
      expect(row.n2_min).toBe(count('N2') * 0.5);
      expect(row.r_min).toBe(count('R') * 0.5);
      expect(row.tst_min).toBe(tst);
      expect(row.efficiency_pct).toBeCloseTo((100 * tst) / (h.length * 0.5), 9);
      expect(row.sol_min).toBe((h[first].onset - h[0].onset) / 60);
      expect(row.rem_latency_min).toBe((h[firstR].onset - h[first].onset) / 60);
      expect(row.waso_min).toBe(waso);
      expect(row.n3_pct).toBeCloseTo((100 * count('N3') * 0.5) / tst, 9);
    }
    // the fixture's night holds one awakening inside sleep, so WASO cannot be trivially zero
    expect(rows.some((r) => (r.waso_min as number) > 0)).toBe(true);
  });

  it('ingest errors list the failed input', async () => {
    const errors = await ingestErrors(client, schema);
    expect(errors).toEqual([
      { run_id: 'run-1', file: 'sub-07_night.edf', step: 'edf-header', field: 'number of signals', message: 'header says 0 signals' },
    ]);
  });

  it('spectra come back as one Float32Array, equal to node-api reading', async () => {
    const m = await spectraMatrix(client, { stage: 'N2', reference: 'recorded', averaging: 'mean' });
    expect(m.nBins).toBe(FIXTURE_SPECTRUM.nBins);
    expect(m.freqStepHz).toBe(FIXTURE_SPECTRUM.freqStepHz);
    expect(m.power).toBeInstanceOf(Float32Array);
    expect(m.power.length).toBe(powers.length * m.nBins);
    expect(m.channels.slice(0, 3)).toEqual([...FIXTURE_CHANNELS]);
    for (let r = 0; r < powers.length; r++) {
      for (let b = 0; b < m.nBins; b++) expect(m.power[r * m.nBins + b]).toBe(Math.fround(powers[r][b]));
    }
    const none = await spectraMatrix(client, { stage: 'N1', reference: 'recorded', averaging: 'mean' });
    expect(none.power.length).toBe(0);
  });
});
