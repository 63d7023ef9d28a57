import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { openStore } from '../../ingest/store/database.ts';
import { storeClient } from '../../src/analysis/store-client.ts';
import { aperiodicRows } from '../../src/queries/fits.ts';
import { spectraRows } from '../../src/queries/spectra.ts';
import { writeFixtureEdf } from './fixture.ts';

// One invented recording (tests/ingest/fixture.ts): 9 channels, 128 Hz, 48 epochs of 30 s, a
// 900-µV spike on C3 in epoch 5, 13.5-Hz spindles in N2; ingested with Welch and multitaper
// (NW = 2, K = 3) spectra, recorded reference.
const dir = mkdtempSync(path.join(tmpdir(), 'bw-mt-'));
const file = path.join(dir, 'rec.edf');
const rec: CohortRecording = { row: 1, subject: 's1', session: null, group: null, recordingPath: file, scoringPath: null, covariates: {} };
let stages: string[] = [];
let bundle: Awaited<ReturnType<typeof processRecording>>;
let ref: { spectra: Float64Array; nBins: number; labels: string[] };

beforeAll(async () => {
  stages = await writeFixtureEdf(file, { seed: 11, fsHz: 128, nEpochs: 48, artifactEpochs: [5] });
  bundle = await processRecording(rec, resolveIngestParams({ references: ['recorded'], multitaper: { nw: 2, k: 3 } }));
  // outside reference: numpy decode of the EDF (Kemp et al. 1992), then per epoch the multitaper
  // estimate built from scipy.signal.windows.dpss tapers (tests/ingest/scipy_pipeline.py)
  const out = path.join(dir, 'ref.f64');
  const line = execFileSync('python3', [path.join(import.meta.dirname, 'scipy_pipeline.py'), file, '30', '4', '45', out, '2', '3'], { encoding: 'utf8' })
    .trim()
    .split('\n')
    .pop()!;
  const summary = JSON.parse(line);
  ref = { spectra: new Float64Array(readFileSync(out).buffer.slice(0)), nBins: summary.n_bins, labels: summary.labels };
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('ingest with multitaper spectra', () => {
  it('stores a multitaper row beside every Welch row, with the same keys, epochs and segments', () => {
    const key = (s: (typeof bundle.spectra)[number]) => `${s.channel}|${s.stage}|${s.reference}|${s.averaging}|${s.nEpochs}|${s.nSegments}|${s.power.length}`;
    const welch = bundle.spectra
      .filter((s) => (s.estimator ?? 'welch') === 'welch')
      .map(key)
      .sort();
    const mt = bundle.spectra
      .filter((s) => s.estimator === 'multitaper')
      .map(key)
      .sort();
    expect(welch.length).toBe(8 * 5 * 2); // 8 EEG channels × 5 stages × mean/median
    expect(mt).toEqual(welch);
  });

  it('stage means equal the scipy-dpss multitaper estimate averaged over the same clean epochs (Float32 storage)', () => {
    const spectra = bundle.spectra.filter((s) => s.estimator === 'multitaper' && s.averaging === 'mean');
    expect(spectra.length).toBe(40);
    let worst = 0;
    for (const s of spectra) {
      const rejected = new Set(bundle.rejections.filter((r) => r.channel === s.channel).map((r) => r.epoch));
      const rows = stages.map((st, e) => (st === s.stage && !rejected.has(e) ? e : -1)).filter((e) => e >= 0);
      expect(s.nEpochs).toBe(rows.length);
      const c = ref.labels.indexOf(`EEG ${s.channel}`);
      const mean = new Float64Array(ref.nBins);
      for (const e of rows) {
        const at = (e * ref.labels.length + c) * ref.nBins;
        for (let k = 0; k < ref.nBins; k++) mean[k] += ref.spectra[at + k] / rows.length;
      }
      for (let k = 1; k < ref.nBins; k++) worst = Math.max(worst, Math.abs(s.power[k] - mean[k]) / mean[k]);
    }
    expect(worst).toBeLessThan(1e-4);
  });

  it('fits the aperiodic component of both estimates, and both see the planted 13.5-Hz spindle peak in N2', () => {
    const fits = (estimator: string) => bundle.aperiodic.filter((a) => (a.estimator ?? 'welch') === estimator && a.stage === 'N2' && a.averaging === 'mean');
    expect(fits('multitaper').length).toBe(fits('welch').length);
    expect(fits('multitaper').length).toBe(8);
    for (const estimator of ['welch', 'multitaper']) {
      const peaks = bundle.peaks.filter((p) => (p.estimator ?? 'welch') === estimator && p.stage === 'N2' && p.averaging === 'mean' && p.channel === 'C4');
      // the fixture's spindle is a 13.5-Hz sine; the multitaper estimate smooths it over ±W = ±0.5 Hz
      expect(
        peaks.some((p) => Math.abs(p.centerHz - 13.5) <= 0.5),
        estimator,
      ).toBe(true);
    }
  });

  it('keeps the quality rows on Welch: one fit-quality row per metric and cell, as without multitaper', () => {
    const metrics = bundle.quality.filter((q) => q.channel === 'C4' && q.stage === 'N2').map((q) => q.metric);
    expect(metrics.length).toBe(new Set(metrics).size);
  });

  it('the database keeps the estimators apart: readers take the estimator, Welch by default', async () => {
    const file = path.join(dir, 'mt.duckdb');
    const store = await openStore(file, { create: true });
    const { runId } = await store.beginRun('0.1.0', { multitaper: { nw: 2, k: 3 } });
    await store.writeRecording({ ...bundle, runId });
    await store.finishRun(runId);
    const db = storeClient(store);
    const q = { runId, stage: 'N2' as const, reference: 'recorded', averaging: 'mean' };
    const byDefault = await spectraRows(db, q);
    const welch = await spectraRows(db, { ...q, estimator: 'welch' });
    const mt = await spectraRows(db, { ...q, estimator: 'multitaper' });
    await expect(aperiodicRows(db, { ...q, estimator: 'multitaper' }, 'fit')).resolves.toHaveLength(8);
    await store.close();
    const expected = (estimator: string, channel: string) =>
      bundle.spectra.find((s) => (s.estimator ?? 'welch') === estimator && s.stage === 'N2' && s.averaging === 'mean' && s.channel === channel)!.power;
    expect(byDefault.rows.length).toBe(8);
    for (const [got, estimator] of [
      [byDefault, 'welch'],
      [welch, 'welch'],
      [mt, 'multitaper'],
    ] as const) {
      for (const row of got.rows) expect(Array.from(row.power), `${estimator} ${row.channel}`).toEqual(Array.from(expected(estimator, row.channel)));
    }
  });
});
