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
    expect(choices.relativeDenominatorsHz).toEqual([
      [0.5, 45],
      [1, 30],
    ]);
    // the sets hold fitted peaks and one estimator: fixed and individual bands, Welch only
    expect(choices.bandDefinitions).toEqual(['fixed', 'individual']);
    expect(choices.estimators).toEqual(['welch']);
    // per (reference, averaging, band, band definition): absolute × 2 summaries + relative × 2 denominators + residual × 1 fit range
    expect(enumeratePaths(choices)).toHaveLength(1 * 2 * 3 * 2 * (2 + 2 + 1));
    // the frequency-wise test reads the fixed band's bins only
    expect(enumeratePaths(choices, 'frequency-wise')).toHaveLength(1 * 2 * 3 * (1 + 2 + 1));
    const ids = enumeratePaths(choices).map((p) =>
      JSON.stringify([p.measure, p.denominatorHz, p.reference, p.averaging, p.estimator, p.summary, p.fitRangeHz, p.band, p.bandDefinition]),
    );
    expect(new Set(ids).size).toBe(ids.length);
    expect(edgeVariants({ name: 'x', loHz: 4, hiHz: 5 })).toHaveLength(2); // no narrower band below 1 Hz width
  });

  it('gives each path the effect of the same test in the band check, sorted, with the share of significant paths', () => {
    const choices = { ...defaultPathChoices(contrast, sigma, sets), averagings: ['mean' as const] };
    const curve = runPaths(contrast, sigma, choices, sets);
    const check = bandCheck(contrast, sigma, data, { fitRangeHz: FIT_RANGE_HZ });
    const find = (m: string, extra: (p: (typeof curve.paths)[number]) => boolean) =>
      curve.paths.find((p) => p.measure === m && p.band.loHz === 12 && p.band.hiHz === 16 && extra(p))!;
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

  it("decides on power only or on power and the peak centre (Bonferroni ×2); the centre test is the band check's", () => {
    const shifted = simulateCohort('shift-1hz', 4);
    const own: PathDataSet[] = [{ reference: 'recorded', averaging: 'mean', fitRangeHz: FIT_RANGE_HZ, data: shifted }];
    const choices = {
      ...defaultPathChoices(contrast, sigma, own),
      measures: ['residual' as const],
      decisions: ['power' as const, 'power-and-frequency' as const],
      bandDefinitions: ['fixed' as const],
    };
    expect(enumeratePaths(choices)).toHaveLength(3 * 2); // 3 band edges × 2 decisions
    const curve = runPaths(contrast, sigma, choices, own);
    const check = bandCheck(contrast, sigma, shifted, { fitRangeHz: FIT_RANGE_HZ });
    const path = (decision: string) => curve.paths.find((p) => p.decision === decision && p.band.loHz === 12 && p.band.hiHz === 16)!;
    const power = path('power');
    const both = path('power-and-frequency');
    expect(power.frequency).toBeUndefined();
    expect(power.p).toBe(check.tests.periodic.p);
    expect(both.effect).toBe(power.effect); // the curve shows the power effect
    expect(both.frequency!.effect).toBeCloseTo(check.tests.peakCenter!.effect, 12);
    expect(both.frequency!.p).toBe(check.tests.peakCenter!.p);
    expect(both.frequency!.withoutPeak).toEqual(check.peakCenter.withoutPeak);
    expect(both.p).toBeCloseTo(Math.min(1, 2 * Math.min(power.p, both.frequency!.p)), 12);
    expect(both.description).toContain('decided on power and the peak centre (Bonferroni ×2)');
    // the planted 1-Hz slowing: every path that decides on the centre too is significant
    for (const p of curve.paths.filter((x) => x.decision === 'power-and-frequency' && x.band.loHz < 13))
      expect(p.significant && p.frequency!.differenceHz! < -0.5).toBe(true);
    // in 13–15 Hz the patients' slowed peaks (≈ 12.5 Hz) fall outside the band: too few for the centre test, which says so and counts as p = 1
    const narrow = curve.paths.find((x) => x.decision === 'power-and-frequency' && x.band.loHz === 13)!;
    expect(narrow.frequency!.skipped).toMatch(/^too few subjects with a fitted peak in sigma 13–15 Hz \(control \d+, patient [01];/);
    expect(narrow.p).toBeCloseTo(Math.min(1, 2 * curve.paths.find((x) => x.decision === 'power' && x.band.loHz === 13)!.p), 12);
    const noPeaks: PathDataSet[] = [{ ...own[0], data: { ...shifted, peaks: [] } }];
    expect(() => runPaths(contrast, sigma, choices, noPeaks)).toThrow(/no fitted peaks in the data set for reference recorded, averaging mean/);
  });

  it('varies the estimator and the band definition: each such path equals the band check run with that estimator and definition', () => {
    // a second data set stands in for the multitaper spectra of the same subjects (another simulated cohort)
    const other = simulateCohort('peak', 5);
    const both: PathDataSet[] = [
      { ...sets[0], data },
      { reference: 'recorded', averaging: 'mean', estimator: 'multitaper', fitRangeHz: FIT_RANGE_HZ, data: other },
    ];
    const choices = {
      ...defaultPathChoices(contrast, sigma, both),
      averagings: ['mean' as const],
      bands: [sigma],
      measures: ['absolute' as const, 'residual' as const],
      summaries: ['mean' as const],
    };
    expect(choices.estimators).toEqual(['welch', 'multitaper']);
    const curve = runPaths(contrast, sigma, choices, both);
    expect(curve.nPaths).toBe(2 * 2 * 2); // estimator × band definition × (absolute, residual)
    for (const [estimator, rows] of [
      ['welch', data],
      ['multitaper', other],
    ] as const) {
      for (const bandDefinition of ['fixed', 'individual'] as const) {
        const check = bandCheck({ ...contrast, estimator, bandDefinition }, sigma, rows, { fitRangeHz: FIT_RANGE_HZ });
        const path = (m: string) => curve.paths.find((p) => p.measure === m && p.estimator === estimator && p.bandDefinition === bandDefinition)!;
        expect(path('absolute').effect, `${estimator} ${bandDefinition}`).toBeCloseTo(check.tests.raw.effect, 12);
        expect(path('residual').effect, `${estimator} ${bandDefinition}`).toBeCloseTo(check.tests.periodic.effect, 12);
        expect(path('absolute').description).toContain(estimator);
      }
    }
  });

  it('refuses a fit range or reference that is not stored, naming what is', () => {
    const choices = { ...defaultPathChoices(contrast, sigma, sets), fitRangesHz: [[2, 30]] as [number, number][] };
    expect(() => runPaths(contrast, sigma, choices, sets)).toThrow(PathError);
    expect(() => runPaths(contrast, sigma, choices, sets)).toThrow(/2–30 Hz is not stored .*stored: 1–40 Hz/);
    expect(() => runPaths(contrast, sigma, { ...defaultPathChoices(contrast, sigma, sets), references: ['average'] }, sets)).toThrow(
      /no data set for reference average/,
    );
  });
});
