/**
 * Robustness paths on one simulated cohort (tests/verdict/cohorts.ts): the enumeration takes
 * every combination once (choices that do not apply to a measure are not varied for it), each
 * path's effect equals the band check's test of the same measure (same engine, same subjects),
 * the curve is sorted and its share counted, and a fit range that is not stored fails by name.
 */
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { bandCheck, defaultPathChoices, edgeVariants, enumeratePaths, PathError, runPaths, type PathDataSet } from '../../src/core/verdict/index.ts';
import { FIT_RANGE_HZ, simulateCohort } from './cohorts.ts';

const sigma = { name: 'sigma', loHz: 12, hiHz: 16 };
const contrast = parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2', permutations: 200, seed: 3 });
const data = simulateCohort('peak', 4);
const sets: PathDataSet[] = [
  { reference: 'recorded', averaging: 'mean', fitRangeHz: FIT_RANGE_HZ, data },
  { reference: 'recorded', averaging: 'median', fitRangeHz: FIT_RANGE_HZ, data },
];

describe('robustness paths', () => {
  it('enumerates each combination once', () => {
    const choices = defaultPathChoices(contrast, sigma, sets);
    expect(choices.bands).toEqual([{ name: 'sigma', loHz: 11, hiHz: 17 }, sigma, { name: 'sigma', loHz: 13, hiHz: 15 }]);
    expect(choices.relativeDenominatorsHz).toEqual([[0.5, 45], [1, 30]]);
    // per (reference, averaging, band): absolute × 2 summaries + relative × 2 denominators + residual × 1 fit range
    expect(enumeratePaths(choices)).toHaveLength(1 * 2 * 3 * (2 + 2 + 1));
    const ids = enumeratePaths(choices).map((p) => JSON.stringify([p.measure, p.denominatorHz, p.reference, p.averaging, p.summary, p.fitRangeHz, p.band]));
    expect(new Set(ids).size).toBe(ids.length);
    expect(edgeVariants({ name: 'x', loHz: 4, hiHz: 5 })).toHaveLength(2); // no narrower band below 1 Hz width
  });

  it('gives each path the effect of the same test in the band check, sorted, with the share of significant paths', () => {
    const choices = { ...defaultPathChoices(contrast, sigma, sets), averagings: ['mean' as const] };
    const curve = runPaths(contrast, sigma, choices, sets);
    const check = bandCheck(contrast, sigma, data, { fitRangeHz: FIT_RANGE_HZ });
    const find = (m: string, extra: (p: (typeof curve.paths)[number]) => boolean) => curve.paths.find((p) => p.measure === m && p.band.loHz === 12 && p.band.hiHz === 16 && extra(p))!;
    expect(find('absolute', (p) => p.summary === 'mean').effect).toBeCloseTo(check.tests.raw.effect, 12);
    expect(find('residual', () => true).effect).toBeCloseTo(check.tests.periodic.effect, 12);
    expect(find('relative', (p) => p.denominatorHz![0] === 0.5).effect).toBeCloseTo(check.tests.relative.effect, 12);
    expect(find('residual', () => true).p).toBe(check.tests.periodic.p);
    for (let i = 1; i < curve.paths.length; i++) expect(curve.paths[i].effect).toBeGreaterThanOrEqual(curve.paths[i - 1].effect);
    expect(curve.nSignificant).toBe(curve.paths.filter((p) => p.p < 0.05).length);
    expect(curve.shareSignificant).toBeCloseTo(curve.nSignificant / curve.nPaths, 12);
    // the planted peak reduction: the residual paths are all negative and significant
    for (const p of curve.paths.filter((x) => x.measure === 'residual')) expect(p.significant && p.effect < 0).toBe(true);
    expect(curve.notes).toEqual(['aperiodic fit range not varied: the database stores one fit range (1–40 Hz)']);
  });

  it('frequency-wise: no summary choice, the residual effect is the band mean, p from the cluster test over the band bins', () => {
    const choices = { ...defaultPathChoices(contrast, sigma, sets), averagings: ['mean' as const], bands: [sigma] };
    expect(enumeratePaths(choices, 'frequency-wise')).toHaveLength(1 + 2 + 1);
    const fw = runPaths(contrast, sigma, choices, sets, { test: 'frequency-wise' });
    const bs = runPaths(contrast, sigma, choices, sets);
    const res = (c: typeof fw) => c.paths.find((p) => p.measure === 'residual')!;
    expect(res(fw).effect).toBeCloseTo(res(bs).effect, 12);
    expect(res(fw).ciLow).toBeCloseTo(res(bs).ciLow, 12);
    // the planted peak reduction forms a negative cluster over the band's bins: p at its floor 1/(1 + 200)
    expect(res(fw).p).toBeCloseTo(1 / 201, 12);
    expect(fw.test).toBe('frequency-wise');
  });

  it('refuses a fit range or reference that is not stored, naming what is', () => {
    const choices = { ...defaultPathChoices(contrast, sigma, sets), fitRangesHz: [[2, 30]] as [number, number][] };
    expect(() => runPaths(contrast, sigma, choices, sets)).toThrow(PathError);
    expect(() => runPaths(contrast, sigma, choices, sets)).toThrow(/2–30 Hz is not stored .*stored: 1–40 Hz/);
    expect(() => runPaths(contrast, sigma, { ...defaultPathChoices(contrast, sigma, sets), references: ['average'] }, sets)).toThrow(/no data set for reference average/);
  });
});
