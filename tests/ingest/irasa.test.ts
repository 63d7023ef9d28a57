import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { Irasa } from '../../src/core/spectrum/irasa.ts';
import { writeFixtureEdf } from './fixture.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-irasa-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('IRASA at ingest (on request)', () => {
  it("stores one irasa row per channel and stage, equal to IRASA over that stage's clean epochs", async () => {
    const file = path.join(dir, 'r.edf');
    const labels = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];
    const stages = await writeFixtureEdf(file, { seed: 9, fsHz: 128, nEpochs: 24, labels, artifactEpochs: [9] });
    const rec: CohortRecording = { row: 1, subject: 's1', session: null, group: null, recordingPath: file, scoringPath: null, covariates: {} };
    const bundle = await processRecording(rec, resolveIngestParams({ fit: { fitRangeHz: [1, 30], aperiodicForm: 'power-law' }, irasa: {}, minEpochs: 2 }));
    const irasaRows = bundle.aperiodic.filter((a) => a.method === 'irasa');
    const scored = [...new Set(stages)];
    expect(irasaRows.length).toBe(labels.length * scored.length);
    // fit range 1–30 Hz is below fs/(2·1.9) = 33.7 Hz at 128 Hz, so it is kept
    for (const r of irasaRows) expect([r.fitLoHz, r.fitHiHz]).toEqual([1, 30]);

    // independent recomputation for C3 in N2: the clean epochs (not rejected) through the core estimator
    const rejected = new Set(bundle.rejections.filter((r) => r.channel === 'C3').map((r) => r.epoch));
    const edf = await openEdf(file);
    const c3 = edf.header.signals.findIndex((s) => s.label.trim() === 'EEG C3');
    const est = new Irasa(128, { fitRangeHz: [1, 30] });
    for await (const block of edf.readEpochs({ signals: [c3], epochS: 30 })) {
      if (block.data && stages[block.epoch] === 'N2' && !rejected.has(block.epoch)) est.add(block.data[0]);
    }
    await edf.close();
    const expected = est.result().fit;
    const stored = irasaRows.find((r) => r.channel === 'C3' && r.stage === 'N2')!;
    expect(stored.exponent).toBeCloseTo(expected.exponent, 10);
    expect(stored.offset).toBeCloseTo(expected.offset, 10);
    expect(stored.averaging).toBe('mean');
    expect(stored.reference).toBe('recorded');
  });
});
