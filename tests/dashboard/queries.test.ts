// The named queries (src/queries), run by duckdb-wasm (blocking node build, the browser's engine)
// on the fixture database. Expected values are computed independently of the SQL under test:
// group sizes from the fixture's participant list; the stored sleep architecture checked against
// src/core/hypnogram/architecture.ts run on the hypnogram read back with @duckdb/node-api (another
// DuckDB build); stage shares as 100 × stage minutes / total sleep time (common practice);
// spectra compared value by value with node-api's reading of the same FLOAT[] lists.
import { DuckDBInstance } from '@duckdb/node-api';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { groupSizes, ingestErrors, participants, recordingsOverview } from '../../src/queries/cohort.ts';
import { runs } from '../../src/queries/runs.ts';
import { cohortSchema, groupingColumns, type CohortSchema } from '../../src/queries/schema.ts';
import { channelSpectra, spectraRows } from '../../src/queries/spectra.ts';
import { sleepArchitecture } from '../../src/core/hypnogram/architecture.ts';
import type { Stage } from '../../src/core/stages.ts';
import { FIXTURE_CHANNELS, FIXTURE_PARAMETERS, FIXTURE_PARTICIPANTS, FIXTURE_SPECTRUM, makeFixtureDb } from '../fixtures/make-fixture-db.ts';
import { wasmClientFor } from './wasm-client.ts';

describe('named queries on the fixture database (duckdb-wasm)', () => {
  let dir: string;
  let file: string;
  let client: Awaited<ReturnType<typeof wasmClientFor>>;
  let schema: CohortSchema;
  const hypnograms = new Map<string, Stage[]>();
  /** N2 recorded mean lists read by node-api, by subject and channel */
  const powers = new Map<string, number[]>();

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-queries-'));
    file = path.join(dir, 'fixture.duckdb');
    await makeFixtureDb(file);
    const instance = await DuckDBInstance.create(file, { access_mode: 'READ_ONLY' });
    const c = await instance.connect();
    const epochs = await c.runAndReadAll('SELECT recording_id, stage FROM epochs ORDER BY recording_id, epoch');
    for (const [id, stage] of epochs.getRows()) {
      const list = hypnograms.get(String(id)) ?? [];
      list.push(String(stage) as Stage);
      hypnograms.set(String(id), list);
    }
    const spectra = await c.runAndReadAll(
      `SELECT r.subject, s.channel, s.power FROM spectra s JOIN recordings r USING (recording_id) WHERE s.stage = 'N2' AND s.reference = 'recorded' AND s.averaging = 'mean'`,
    );
    for (const [subject, channel, p] of spectra.getRowsJson()) powers.set(`${subject}|${channel}`, (p as number[]).map(Number));
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
    expect(r[0].runId).toBe('run0000000000001');
    expect(r[0].parameters).toEqual(FIXTURE_PARAMETERS);
    expect(r[0].startedAt).toBe('2026-01-05 09:00:00');
  });

  it('group sizes match the participant list', async () => {
    const sizes = await groupSizes(client, schema, 'group');
    const expected = ['control', 'patient'].map((g) => {
      const members = FIXTURE_PARTICIPANTS.filter((p) => p.group === g);
      const ingested = members.filter((p) => p.ingested).length;
      return { group: g, subjects: members.length, recordings: ingested, withSpectra: ingested };
    });
    expect(sizes).toEqual(expected);
    const bySex = await groupSizes(client, schema, 'sex');
    expect(bySex.map((s) => s.subjects)).toEqual([
      FIXTURE_PARTICIPANTS.filter((p) => p.sex === 'F').length,
      FIXTURE_PARTICIPANTS.filter((p) => p.sex === 'M').length,
    ]);
    const all = await groupSizes(client, schema, null);
    const nIngested = FIXTURE_PARTICIPANTS.filter((p) => p.ingested).length;
    expect(all).toEqual([{ group: 'all', subjects: FIXTURE_PARTICIPANTS.length, recordings: nIngested, withSpectra: nIngested }]);
    await expect(groupSizes(client, schema, 'nope')).rejects.toThrow(/participants has no column "nope"/);
  });

  it('participants keep their columns, numbers as numbers', async () => {
    const p = await participants(client, schema);
    expect(p.columns.map((c) => c.name)).toEqual(['subject', 'group', 'age', 'sex']);
    expect(p.rows).toEqual(FIXTURE_PARTICIPANTS.map((x) => ({ subject: x.subject, group: x.group, age: x.age, sex: x.sex })));
  });

  it('recordings overview: group, sampling rate, duration and stored sleep architecture', async () => {
    const rows = await recordingsOverview(client, schema, 'group');
    const ingested = FIXTURE_PARTICIPANTS.filter((p) => p.ingested);
    expect(rows.map((r) => r.subject)).toEqual(ingested.map((p) => p.subject));
    for (const [i, fx] of ingested.entries()) {
      const row = rows[i];
      expect(row.group).toBe(fx.group);
      expect(row.status).toBe('ok');
      expect(row.duration_min).toBeCloseTo((fx.nEpochs * 30) / 60, 9);
      expect(row.fs_hz).toBe(String(fx.fsHz));
      expect(row.n_channels).toBe(FIXTURE_CHANNELS.length);
      const arch = sleepArchitecture(hypnograms.get(String(row.recording_id))!, 30);
      expect(row.w_min).toBe(arch.minutesPerStage.W);
      expect(row.n2_min).toBe(arch.minutesPerStage.N2);
      expect(row.r_min).toBe(arch.minutesPerStage.R);
      expect(row.unscored_min).toBe(arch.minutesPerStage.unscored);
      expect(row.tst_min).toBe(arch.totalSleepTimeMin);
      expect(row.se_pct).toBeCloseTo(arch.sleepEfficiencyPct!, 9);
      expect(row.sol_min).toBe(arch.sleepOnsetLatencyMin);
      expect(row.n3_pct).toBeCloseTo((100 * arch.minutesPerStage.N3) / arch.totalSleepTimeMin, 9);
      expect(row.r_pct).toBeCloseTo((100 * arch.minutesPerStage.R) / arch.totalSleepTimeMin, 9);
      // columns the schema does not have are left out, not invented
      expect('waso_min' in row).toBe(schema.has('recordings', 'waso_min'));
    }
    const ungrouped = await recordingsOverview(client, schema, null);
    expect('group' in ungrouped[0]).toBe(false);
  });

  it('ingest errors list the failed input', async () => {
    const errors = await ingestErrors(client, schema);
    expect(errors).toEqual([
      { run_id: 'run0000000000001', file: 'sub-07/sub-07_night.edf', step: 'read-edf', field: 'number of signals', message: 'header says 0 signals' },
    ]);
  });

  it('spectra come back as views of one Float32Array, equal to node-api reading, in subject order; cut at maxHz on request', async () => {
    const [run] = await runs(client);
    const key = { runId: run.runId, stage: 'N2' as const, reference: 'recorded', averaging: 'mean' };
    const m = await spectraRows(client, key);
    expect([m.freqStartHz, m.freqStepHz, m.nBins]).toEqual([FIXTURE_SPECTRUM.freqStartHz, FIXTURE_SPECTRUM.freqStepHz, FIXTURE_SPECTRUM.nBins]);
    expect(m.rows.length).toBe(powers.size);
    const ingested = FIXTURE_PARTICIPANTS.filter((p) => p.ingested);
    expect(m.rows.map((r) => `${r.subject}|${r.channel}`)).toEqual(ingested.flatMap((p) => FIXTURE_CHANNELS.map((ch) => `${p.subject}|${ch}`)));
    for (const r of m.rows) {
      expect(r.power).toBeInstanceOf(Float32Array);
      expect(r.power.buffer).toBe(m.rows[0].power.buffer);
      expect(Array.from(r.power)).toEqual(powers.get(`${r.subject}|${r.channel}`)!.map(Math.fround));
    }
    // 0 + k·0.25 Hz ≤ 10 Hz: bins 0…40
    const cut = await spectraRows(client, key, 10);
    expect(cut.nBins).toBe(41);
    expect(cut.rows.map((r) => Array.from(r.power))).toEqual(m.rows.map((r) => Array.from(r.power.subarray(0, 41))));
    expect((await spectraRows(client, { ...key, stage: 'N1', reference: 'average' })).rows).toEqual([]);
  });

  it("one channel's spectra across recordings, in recording order, equal to node-api reading", async () => {
    const s = await channelSpectra(client, { channel: 'C4', stage: 'N2', reference: 'recorded', averaging: 'mean' });
    const ingested = FIXTURE_PARTICIPANTS.filter((p) => p.ingested);
    expect(s.recordingIds.length).toBe(ingested.length);
    expect(s.nBins).toBe(FIXTURE_SPECTRUM.nBins);
    const subjectOf = new Map((await recordingsOverview(client, schema, null)).map((r) => [String(r.recording_id), String(r.subject)]));
    expect([...s.recordingIds].sort()).toEqual(s.recordingIds);
    s.recordingIds.forEach((id, i) => {
      expect(Array.from(s.power.subarray(i * s.nBins, (i + 1) * s.nBins))).toEqual(powers.get(`${subjectOf.get(id)}|C4`)!.map(Math.fround));
    });
  });
});
