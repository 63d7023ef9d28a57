import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runIngest } from '../../ingest/run.ts';
import { writeSimulatedCohort } from '../../src/simulation/write-cohort.ts';

// The demo scenario (demo-cohort/scenario.json, invented) cut to 5 controls + 5 patients, one hour
// each, two of them at 128 Hz and the rest at 256 Hz, artifacts left out; its ground-truth JSON
// gives every subject's aperiodic parameters and peak heights, so the stored spectra are checked
// subject by subject and as group means. Size: 10 recordings × 13 channels × 120 epochs.
const dir = mkdtempSync(path.join(tmpdir(), 'bw-demo-'));
const db = path.join(dir, 'demo.duckdb');
const step = 0.25;
interface Row {
  subject: string;
  group: string;
  channel: string;
  power: number[];
  fsHz: number;
  nBins: number;
}
let rows: Row[] = [];
let truth: any;

beforeAll(async () => {
  const scenario = JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../../demo-cohort/scenario.json'), 'utf8'));
  scenario.groups = scenario.groups.map((g: object) => ({ ...g, size: 5 }));
  scenario.artifacts = [];
  scenario.subjects = { ctl05: { fsHz: 128 }, pat03: { fsHz: 128 } };
  const files = await writeSimulatedCohort(scenario, dir);
  truth = JSON.parse(readFileSync(files.truthPath, 'utf8'));
  const summary = await runIngest(files.participantsPath, db, { jobs: 2, params: { fit: null } });
  expect(summary).toMatchObject({ done: 10, failed: [] });
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  const got = (
    await c.runAndReadAll(`SELECT r.subject, p."group", s.channel, s.power, s.n_bins, s.freq_step_hz, ch.fs_hz
    FROM spectra s JOIN recordings r USING (recording_id) JOIN participants p USING (subject)
    JOIN channels ch ON ch.recording_id = s.recording_id AND ch.channel = s.channel
    WHERE s.stage = 'N2' AND s.reference = 'recorded' AND s.averaging = 'mean'`)
  ).getRowObjectsJS() as Record<string, any>[];
  rows = got.map((r) => ({ subject: r.subject, group: r.group, channel: r.channel, power: r.power as number[], fsHz: r.fs_hz, nBins: r.n_bins }));
  expect(got.every((r) => r.freq_step_hz === step)).toBe(true);
  c.closeSync();
  inst.closeSync();
}, 240_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const subjectTruth = (s: string) => truth.subjects.find((x: { subject: string }) => x.subject === s);
// ground truth aperiodic model: log10 P = offset − log10(knee + f^exponent) (truth.json 'model')
const aperiodic = (a: { offset: number; exponent: number; knee: number }, f: number) => a.offset - Math.log10(a.knee + f ** a.exponent);
const mean = (x: number[]) => x.reduce((a, b) => a + b, 0) / x.length;
const BETA = Array.from({ length: 41 }, (_, i) => 80 + i); // 20–30 Hz: no planted rhythm there

describe('demo cohort: planted effects in the stored spectra', () => {
  it('stores aligned bins for 128-Hz and 256-Hz recordings and matches each subject’s aperiodic truth', () => {
    expect(new Set(rows.map((r) => r.fsHz))).toEqual(new Set([128, 256]));
    expect(new Set(rows.map((r) => r.nBins))).toEqual(new Set([181]));
    expect(rows.length).toBe(10 * 13);
    for (const r of rows) {
      const a = subjectTruth(r.subject).aperiodic.N2[r.channel];
      const resid = mean(BETA.map((k) => Math.log10(r.power[k]) - aperiodic(a, k * step)));
      expect(Math.abs(resid), `${r.subject} ${r.channel}`).toBeLessThan(0.03);
    }
  });

  it('shows the broadband offset: patients − controls at 20–30 Hz equals the truth’s difference', () => {
    const level = (g: string, fromTruth: boolean) =>
      mean(
        rows
          .filter((r) => r.group === g)
          .map((r) => {
            const a = subjectTruth(r.subject).aperiodic.N2[r.channel];
            return mean(BETA.map((k) => (fromTruth ? aperiodic(a, k * step) : Math.log10(r.power[k]))));
          }),
      );
    const stored = level('patient', false) - level('control', false);
    const planted = level('patient', true) - level('control', true);
    expect(Math.abs(stored - planted)).toBeLessThan(0.02);
    expect(stored).toBeGreaterThan(0.1); // planted +0.15 log10 (scenario effect 'offset'), visible
  });

  it('shows the fast-spindle reduction over C3, C4, Cz, P3, P4, Pz in N2 at each subject’s spindle frequency', () => {
    const sites = ['C3', 'C4', 'Cz', 'P3', 'P4', 'Pz'];
    const height = (g: string, fromTruth: boolean) =>
      mean(
        rows
          .filter((r) => r.group === g && sites.includes(r.channel))
          .map((r) => {
            const t = subjectTruth(r.subject);
            const peak = t.peaks.N2[r.channel].find((p: { rhythm: string }) => p.rhythm === 'fast-spindle');
            const k = Math.round(peak.centerHz / step);
            return fromTruth ? peak.heightLog10 : Math.log10(r.power[k]) - aperiodic(t.aperiodic.N2[r.channel], k * step);
          }),
      );
    const stored = height('patient', false) - height('control', false);
    const planted = height('patient', true) - height('control', true);
    expect(Math.abs(stored - planted)).toBeLessThan(0.05);
    expect(stored).toBeLessThan(-0.2); // half the amplitude: a quarter of the spindle power
  });
});
