// The contrast loader (src/queries/contrast-data.ts) with the power lists read only up to the
// measure's highest frequency, over duckdb-wasm (the browser's engine), against the whole lists
// read over @duckdb/node-api (another DuckDB build) on the fixture database: the same rows but
// for the bins above fmaxHz, and the same compare() result. Also the quality screen's queries
// against the fixture's known values.
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/index.ts';
import { storeClient } from '../../src/analysis/store-client.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { contrastMaxHz, loadContrastData } from '../../src/queries/contrast-data.ts';
import { qualityRows, recordingEpochs } from '../../src/queries/quality.ts';
import { runs } from '../../src/queries/runs.ts';
import { cohortSchema, type CohortSchema } from '../../src/queries/schema.ts';
import { binsUpTo, channelSpectra } from '../../src/queries/spectra.ts';
import { FIXTURE_CHANNELS, FIXTURE_PARTICIPANTS, fixtureRecordingId, makeFixtureDb } from '../fixtures/make-fixture-db.ts';
import { wasmClientFor } from './wasm-client.ts';

describe('contrast data read up to fmaxHz (duckdb-wasm) equals the whole lists (node-api) below it', () => {
  let dir: string;
  let file: string;
  let client: Awaited<ReturnType<typeof wasmClientFor>>;
  let schema: CohortSchema;

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-contrast-data-'));
    file = path.join(dir, 'fixture.duckdb');
    await makeFixtureDb(file);
    client = await wasmClientFor(file);
    schema = await cohortSchema(client);
  });

  afterAll(() => {
    client.close();
    rmSync(dir, { recursive: true, force: true });
  });

  const contrasts = [
    { design: 'groups', groups: ['control', 'patient'], stage: 'N2', fminHz: 1, fmaxHz: 20, permutations: 200 },
    { design: 'groups', groups: ['control', 'patient'], stage: 'N3', measure: 'residual', fminHz: 2, fmaxHz: 25, permutations: 200 },
    { design: 'paired', stages: ['N2', 'R'], fminHz: 1, fmaxHz: 20, permutations: 64 },
  ];

  for (const json of contrasts) {
    it(`${json.design} ${json.measure ?? 'log-psd'}: same rows below fmaxHz, same result`, async () => {
      const c = parseContrast(json);
      const exclusions = [{ subject: 'sub-02', channel: null, reason: 'test' }];
      const ours = await loadContrastData(client, schema, await runs(client), c, exclusions, { maxHz: contrastMaxHz(c) });
      const store = await openStore(file, { readOnly: true });
      let theirs;
      try {
        const node = storeClient(store);
        theirs = await loadContrastData(node, await cohortSchema(node), await runs(node), c, exclusions);
      } finally {
        await store.close();
      }
      expect(ours.runId).toBe(theirs.runId);
      const a = ours.data;
      const b = theirs.data;
      expect([a.spectra.freqStartHz, a.spectra.freqStepHz]).toEqual([b.spectra.freqStartHz, b.spectra.freqStepHz]);
      // log-psd and residual lists are read only up to fmaxHz: the first bins of the stored ones
      const maxHz = contrastMaxHz(c);
      const width = maxHz === undefined ? b.spectra.nBins : binsUpTo(b.spectra.freqStartHz, b.spectra.freqStepHz, maxHz);
      expect(a.spectra.nBins).toBe(width);
      if (maxHz !== undefined) expect(width).toBeLessThan(b.spectra.nBins);
      expect(a.spectra.rows.length).toBe(b.spectra.rows.length);
      const plain = (r: (typeof a.spectra.rows)[number]) => ({ ...r, power: Array.from(r.power.subarray(0, width)) });
      expect(a.spectra.rows.map(plain)).toEqual(b.spectra.rows.map(plain));
      expect(a.aperiodic).toEqual(b.aperiodic);
      expect(a.peaks).toEqual(b.peaks);
      // each stored channel's recorded reference, read by both engines (reference 'recorded' here)
      expect(b.recordedReferences!.length).toBeGreaterThan(0);
      expect(a.recordedReferences).toEqual(b.recordedReferences);
      const bySubject = (x: typeof a.participants) => [...x].sort((p, q) => String(p.subject).localeCompare(String(q.subject)));
      expect(bySubject(a.participants)).toEqual(bySubject(b.participants));
      // the fixture's fits are stored under another method name than 'fit': both loaders find none,
      // and both leave every subject out for it
      if (c.measure === 'residual') expect(a.aperiodic).toEqual([]);
      if (c.measure === 'residual') {
        expect(() => compare(c, a)).toThrow();
        expect(() => compare(c, b)).toThrow();
        return;
      }
      const ra = compare(c, a);
      const rb = compare(c, b);
      expect(ra.clusters).toEqual(rb.clusters);
      expect(ra.n).toEqual(rb.n);
      expect(ra.statistics.stat).toEqual(rb.statistics.stat);
      expect(ra.exclusions.some((e) => e.subject === 'sub-02')).toBe(true);
    });
  }

  it('binsUpTo keeps the bins a measure up to maxHz uses (f0 + k·df ≤ maxHz + 1e-9), counted directly', () => {
    for (const [f0, df] of [
      [0, 0.25],
      [0, 0.2],
      [0.5, 0.1],
      [0, 1 / 3],
    ]) {
      for (const maxHz of [0, 0.7, 1, 12.2, 30, 44.9]) {
        let direct = 0;
        while (f0 + direct * df <= maxHz + 1e-9) direct++;
        expect(binsUpTo(f0, df, maxHz)).toBe(Math.max(1, direct));
      }
    }
  });

  it('quality screen queries: rows with subjects, one channel across recordings, epochs with rejections', async () => {
    const q = await qualityRows(client, schema);
    const ingested = FIXTURE_PARTICIPANTS.filter((p) => p.ingested);
    expect(q.map((r) => r.subject)).toEqual(ingested.map((p) => p.subject));
    expect(q.every((r) => r.channel === 'O1' && r.metric === 'line-noise-ratio' && r.flagged === false && r.severity === 0)).toBe(true);
    const s = await channelSpectra(client, { channel: 'C3', stage: 'N2', reference: 'recorded', averaging: 'mean' });
    expect(s.recordingIds.length).toBe(ingested.length);
    expect(s.power.length).toBe(ingested.length * s.nBins);
    const id = fixtureRecordingId(0);
    const epochs = await recordingEpochs(client, id, 'O1');
    expect(epochs.length).toBe(FIXTURE_PARTICIPANTS[0].nEpochs);
    expect(epochs.filter((e) => e.reasons !== '').map((e) => [e.epoch, e.reasons])).toEqual([
      [3, 'peak-to-peak'],
      [4, 'flat'],
    ]);
    expect((await recordingEpochs(client, id, FIXTURE_CHANNELS[0])).every((e) => e.reasons === '')).toBe(true);
  });
});
