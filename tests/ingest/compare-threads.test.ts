// `bandwise compare` with its permutations on worker threads (src/analysis/compare-threads.ts, the
// matrix shared through a SharedArrayBuffer) gives the single-thread compare() of
// src/core/contrast/run.ts on the same rows exactly (JSON equal): a groups design with cluster
// mass on 1, 2 and 3 threads (3 does not divide the 301 permutations evenly), one with TFCE and a
// paired design (its second matrix shared too) on 2; a refusal of the data reaches
// the caller with its type and message. Size: a synthetic database of 24 recordings × 6 channels
// × 5 stages × 61 bins (0–15 Hz), contrasts on 1–12 Hz with 301 permutations.
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compareDatabase } from '../../src/analysis/compare-runner.ts';
import { withDatabase } from '../../src/analysis/store-client.ts';
import { loadContrastData } from '../../src/queries/contrast-data.ts';
import { runs } from '../../src/queries/runs.ts';
import { cohortSchema } from '../../src/queries/schema.ts';
import { writeSyntheticDatabase } from '../../src/simulation/synthetic-store.ts';
import type { ContrastData, Exclusion } from '../../src/core/contrast/data.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { parseContrast, type Contrast } from '../../src/core/contrast/spec.ts';
import { syntheticSpec } from '../../src/core/simulate/synthetic-database.ts';
import { ContrastDataError } from '../../src/core/contrast/data-error.ts';

describe('compare on worker threads', () => {
  let dir: string;
  let file: string;

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-compare-threads-'));
    file = path.join(dir, 'synthetic.duckdb');
    // a strong exponent effect, so the groups contrasts find clusters (the comparison is not between empty results)
    await writeSyntheticDatabase(
      file,
      syntheticSpec({ recordings: 24, channelCount: 6, nBins: 61, seed: 3, effect: { offsetLog10: 0.3, exponent: 0.4, sigmaHeightLog10: -0.1 } }),
    );
  });

  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  async function rows(c: Contrast, exclusions: Exclusion[] = []): Promise<ContrastData> {
    return withDatabase(file, async (db) => (await loadContrastData(db, await cohortSchema(db), await runs(db), c, exclusions)).data);
  }

  const contrasts = {
    'groups, cluster mass': { design: 'groups', groups: ['control', 'patient'], stage: 'N2', fminHz: 1, fmaxHz: 12, permutations: 301, seed: 4 },
    'groups, TFCE': { design: 'groups', groups: ['control', 'patient'], stage: 'N3', fminHz: 1, fmaxHz: 12, correction: 'tfce', permutations: 301, seed: 5 },
    'paired N2 vs R': { design: 'paired', stages: ['N2', 'R'], fminHz: 1, fmaxHz: 12, permutations: 301, seed: 6 },
  };

  for (const [name, json] of Object.entries(contrasts)) {
    const counts = name === 'groups, cluster mass' ? [1, 2, 3] : [2];
    it(`${name}: ${counts.join(', ')} thread(s) equal compare()`, async () => {
      const c = parseContrast(json);
      const single = compare(c, await rows(c));
      expect(single.clusters.length + (single.statistics.tfce ? 1 : 0)).toBeGreaterThan(0);
      for (const threads of counts) {
        const progress: [number, number][] = [];
        const { database, ...result } = await compareDatabase(file, c, [], (done, total) => progress.push([done, total]), undefined, { threads });
        expect(database.file).toBe('synthetic.duckdb');
        expect(JSON.stringify(result), `${threads} threads`).toBe(JSON.stringify(single));
        expect(progress[progress.length - 1]).toEqual([301, 301]);
      }
    });
  }

  it('a refusal of the data (a group of one) reaches the caller typed, as on one thread, the workers stopped', async () => {
    const c = parseContrast(contrasts['groups, cluster mass']);
    // every patient (odd recordings) but one left out: the contrast refuses a group of one (a ContrastDataError)
    const exclusions: Exclusion[] = Array.from({ length: 11 }, () => ({ subject: '', channel: null, reason: 'test' }));
    const all = await rows(c);
    const patients = [...new Set(all.participants.filter((p) => p.group === 'patient').map((p) => String(p.subject)))].sort();
    patients.slice(1).forEach((s, i) => (exclusions[i].subject = s));
    let expected: unknown;
    try {
      compare(c, await rows(c, exclusions));
    } catch (e) {
      expected = e;
    }
    expect(expected).toBeInstanceOf(ContrastDataError);
    const threaded = compareDatabase(file, c, exclusions, undefined, undefined, { threads: 2 });
    await expect(threaded).rejects.toBeInstanceOf(ContrastDataError);
    await expect(threaded).rejects.toThrow((expected as Error).message);
  });
});
