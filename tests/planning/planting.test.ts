// Where the effect is planted, how, and what counts as finding it (src/core/planning planting.ts,
// resample.ts, overlap.ts): the rules the README states, checked on small hand-made layouts.
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { measureLayout } from '../../src/core/contrast/measure.ts';
import { drawStudy, judgeStudy, plantedRegion, plantingRule, preparePower, PlanningInputError } from '../../src/core/planning/index.ts';
import type { PermutationTestResult } from '../../src/core/stats/index.ts';
import { Random } from '../../src/core/stats/random.ts';
import { syntheticCohort } from './synthetic-cohort.ts';

const axis = { freqStartHz: 0, freqStepHz: 0.5, nBins: 61 }; // 0–30 Hz
const contrast = (over: Record<string, unknown>) => parseContrast({ design: 'groups', groups: ['a', 'b'], fminHz: 10, fmaxHz: 18, ...over });
const sigma = { name: 'sigma', loHz: 12, hiHz: 16 };

describe('planted region', () => {
  it('log-psd: the bins 12–16 Hz (edges included) of the planted channels, weight 1', () => {
    const c = contrast({});
    const layout = measureLayout(c, axis);
    const r = plantedRegion(c, layout, ['C3', 'C4', 'Cz'], ['C3', 'C4', 'Cz'], sigma, ['C4']);
    const F = layout.freqsHz.length; // 10–18 Hz: 17 bins
    expect(F).toBe(17);
    const planted = [...r.region.keys()].filter((p) => r.region[p] === 1);
    expect(planted).toEqual(Array.from({ length: 9 }, (_, i) => F + 4 + i)); // C4, 12, 12.5 … 16 Hz
    expect(r.freqsHz).toEqual([12, 12.5, 13, 13.5, 14, 14.5, 15, 15.5, 16]);
    expect([...new Set(planted.map((p) => r.weight[p]))]).toEqual([1]);
    expect(r.weight.reduce((a, b) => a + b, 0)).toBe(9);
  });

  it('band-power: the bands whose centre lies in the band', () => {
    const c = contrast({ measure: 'band-power', bands: ['theta', 'sigma', 'beta', 'slow-sigma'] });
    const layout = measureLayout(c, axis);
    expect(layout.freqsHz).toEqual([6, 11, 14, 23]); // theta, slow-sigma, sigma, beta centres
    const r = plantedRegion(c, layout, ['Cz'], ['Cz'], { name: 'x', loHz: 12, hiHz: 15 }, 'all');
    expect(Array.from(r.region)).toEqual([0, 0, 1, 0]);
    expect(r.freqsHz).toEqual([14]);
  });

  it('a channel average moves by effect × planted/all channels', () => {
    const c = contrast({ channels: ['C3', 'C4', 'Cz', 'Pz'], channelAverage: true });
    const layout = measureLayout(c, axis);
    const r = plantedRegion(c, layout, ['C3', 'C4', 'Cz', 'Pz'], ['mean(C3,C4,Cz,Pz)'], sigma, ['C3']);
    expect(Math.max(...r.weight)).toBe(0.25);
  });

  it('offset and exponent: the channels, no band; other measures are refused in one line', () => {
    const c = contrast({ measure: 'offset' });
    const r = plantedRegion(c, measureLayout(c, axis), ['C3', 'C4'], ['C3', 'C4'], null, ['C4']);
    expect(Array.from(r.region)).toEqual([0, 1]);
    expect(() => plantedRegion(c, measureLayout(c, axis), ['C3'], ['C3'], sigma, 'all')).toThrow('measure offset has no frequency axis: give no band');
    expect(() => plantedRegion(contrast({}), measureLayout(contrast({}), axis), ['C3'], ['C3'], null, 'all')).toThrow(
      'measure log-psd needs the band to plant the effect in (--band LO-HI)',
    );
    for (const m of ['knee', 'peak-height', 'peak-center', 'peak-width'] as const) {
      expect(() => plantingRule(m)).toThrow(
        `measure ${m} takes no planted effect; use log-psd, relative, residual, band-power, relative-band-power, offset, exponent`,
      );
    }
    expect(plantingRule('exponent')).toMatch(/exponent units \(not log10\)/);
    expect(() => plantedRegion(contrast({}), measureLayout(contrast({}), axis), ['C3'], ['C3'], sigma, ['O1'])).toThrow(
      "channel O1 is not one of the contrast's channels (C3)",
    );
    expect(() => plantedRegion(contrast({}), measureLayout(contrast({}), axis), ['C3'], ['C3'], { name: 'g', loHz: 35, hiHz: 40 }, 'all')).toThrow(
      'no point of the contrast lies in 35–40 Hz',
    );
  });

  it('a paired or covariate contrast is refused: power simulates two groups', () => {
    const { data } = syntheticCohort(10, 2, 1);
    const plan = { referenceGroup: 'control', effect: 0.1, band: sigma, channels: 'all' as const, nPerGroup: [5], simulations: 2, seed: 1, alpha: 0.05 };
    expect(() => preparePower(parseContrast({ design: 'covariate', covariate: 'age' }), plan, data)).toThrow(PlanningInputError);
    expect(() => preparePower(contrast({ groups: ['control', 'patient'] }), { ...plan, referenceGroup: 'nobody' }, data)).toThrow(
      "no subject has group 'nobody'; its values are: control, patient",
    );
  });
});

describe('a simulated study', () => {
  it('draws whole reference rows with replacement and shifts only the second group', () => {
    const P = 3;
    const ref = {
      data: Float64Array.from({ length: 4 * P }, (_, i) => 10 * Math.floor(i / P) + (i % P)),
      nSubjects: 4,
      nPoints: P,
      nuisance: [{ name: 'age', values: [20, 30, 40, 50] }],
    };
    const shift = Float64Array.from([0, 0.5, 0]);
    const s = drawStudy(ref, 5, shift, new Random(7));
    expect(Array.from(s.group)).toEqual([0, 0, 0, 0, 0, 1, 1, 1, 1, 1]);
    for (let i = 0; i < 10; i++) {
      const r = s.drawn[i];
      expect(Array.from(s.data.subarray(i * P, (i + 1) * P))).toEqual([10 * r, 10 * r + 1 + (i >= 5 ? 0.5 : 0), 10 * r + 2]);
      expect(s.nuisance[0].values[i]).toBe(20 + 10 * r);
    }
    // with replacement: 10 draws from 4 rows repeat some
    expect(new Set(s.drawn).size).toBeLessThan(10);
  });
});

describe('found or not', () => {
  const result = (over: Partial<PermutationTestResult>): PermutationTestResult =>
    ({ stat: [3, 3, -3, 0], pUncorrected: [0.01, 0.2, 0.01, 1], clusters: [], ...over }) as PermutationTestResult;
  const region = Uint8Array.from([0, 1, 1, 0]);
  const cluster = (sign: 1 | -1, p: number, points: number[]) => ({ sign, p, points, mass: 0, size: points.length, fminHz: 0, fmaxHz: 0, channels: [] });

  it('clusters: significant, of the planted sign, sharing a point with the region', () => {
    expect(judgeStudy(result({ clusters: [cluster(1, 0.01, [0, 1])] }), 'cluster-mass', region, 0.1, 0.05)).toEqual({ found: true, any: true });
    expect(judgeStudy(result({ clusters: [cluster(1, 0.01, [0])] }), 'cluster-mass', region, 0.1, 0.05)).toEqual({ found: false, any: true });
    expect(judgeStudy(result({ clusters: [cluster(-1, 0.01, [2])] }), 'cluster-size', region, 0.1, 0.05)).toEqual({ found: false, any: true });
    expect(judgeStudy(result({ clusters: [cluster(-1, 0.01, [2])] }), 'cluster-size', region, 0, 0.05)).toEqual({ found: true, any: true });
    expect(judgeStudy(result({ clusters: [cluster(1, 0.05, [1])] }), 'cluster-mass', region, 0.1, 0.05)).toEqual({ found: true, any: true });
    expect(judgeStudy(result({ clusters: [cluster(1, 0.051, [1])] }), 'cluster-mass', region, 0.1, 0.05)).toEqual({ found: false, any: false });
  });

  it('no correction: a point with uncorrected p ≤ alpha in the region, of the planted sign', () => {
    expect(judgeStudy(result({}), 'none', region, 0.1, 0.05)).toEqual({ found: false, any: true }); // point 1 p 0.2, point 2 negative
    expect(judgeStudy(result({}), 'none', region, -0.1, 0.05)).toEqual({ found: true, any: true });
    expect(judgeStudy(result({ tfce: { pCorrected: [1, 0.04, 1, 1] } as PermutationTestResult['tfce'] }), 'tfce', region, 0.1, 0.05)).toEqual({
      found: true,
      any: true,
    });
  });
});
