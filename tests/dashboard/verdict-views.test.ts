// Logic of the band check, robustness and report views (no browser): address-bar round trips,
// the path choices against src/core/verdict's own enumeration and defaults, the specification
// curve's dot matrix and share sentence, the effects table's Bonferroni column (adjusted
// p = min(1, 4p) over the four deciding tests: Bonferroni inequality, common practice), the browser ledger counts against
// src/core/report's ledgerCounts, the band check's ledger entry, and the result-file checks.
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { analysisKey, ledgerCounts, ledgerEntry } from '../../src/core/report/index.ts';
import {
  bonferroni,
  defaultPathChoices,
  enumeratePaths,
  type BandCheckResult,
  type PathDataSet,
  type PathResult,
  type SpecificationCurve,
} from '../../src/core/verdict/index.ts';
import { bandCheckLedgerInput } from '../../src/dashboard/db/ledger-report.ts';
import { bandFromParams, withEdges } from '../../src/dashboard/analysis/band-text.ts';
import { bandCheckFromParams, paramsFromBandCheck } from '../../src/dashboard/views/band-check/band-check-params.ts';
import { EFFECTS, effectRows, familyText, peakCentreText, periodicKindText } from '../../src/dashboard/views/band-check/band-check-data.ts';
import { markdownBlocks, parseResultJson, ResultFileError } from '../../src/dashboard/views/report/report-data.ts';
import { matrixDots, matrixRows, measureSentence, pathRows, shareSentence } from '../../src/dashboard/views/robustness/robustness-data.ts';
import { paramsFromChoices, pathChoicesFromParams, RobustnessParamError, toggled } from '../../src/dashboard/views/robustness/robustness-params.ts';

const contrast = parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2', channels: ['C3', 'Cz'], permutations: 500, seed: 7 });
const sigma = { name: 'sigma', loHz: 12, hiHz: 16 };
const stored = {
  references: ['recorded', 'linked-mastoids'],
  averagings: ['mean', 'median'],
  estimators: ['welch' as const],
  fitRangesHz: [[1, 40]] as [number, number][],
};

describe('band check address bar', () => {
  it('round-trips contrast and band; a missing band is sigma 12–16 Hz; edges matching a preset take its name', () => {
    const params = paramsFromBandCheck(contrast, { name: 'theta', loHz: 4, hiHz: 8 });
    expect(params.band).toBe('theta:4-8');
    const back = bandCheckFromParams(params);
    expect(back.contrast).toEqual(contrast);
    expect(back.band).toEqual({ name: 'theta', loHz: 4, hiHz: 8 });
    expect(bandFromParams({})).toEqual(sigma);
    expect(withEdges(13, 15).name).toBe('fast-sigma');
    expect(withEdges(4.5, 8)).toEqual({ name: 'band', loHz: 4.5, hiHz: 8 });
    expect(() => withEdges(8, 4)).toThrow(/invalid edges 8–4 Hz/);
    // the address bar reads bands with the one band grammar of the commands (bands.ts parseBand)
    expect(bandFromParams({ band: 'theta' })).toEqual({ name: 'theta', loHz: 4, hiHz: 8 });
    expect(bandFromParams({ band: '12-16' })).toEqual(sigma); // plain edges of a preset take its name
    expect(bandFromParams({ band: '11-15' })).toEqual({ name: '11–15 Hz', loHz: 11, hiHz: 15 });
    expect(bandCheckFromParams(paramsFromBandCheck(contrast, bandFromParams({ band: '11-15' }))).band).toEqual({ name: '11–15 Hz', loHz: 11, hiHz: 15 });
    expect(() => bandFromParams({ band: 'theta 4-8' })).toThrow(/invalid band 'theta 4-8': expected LO-HI in Hz/);
    // an individual band with its search range and half-width, and the multitaper estimate
    const individual = parseContrast({ ...contrast, estimator: 'multitaper', bandDefinition: 'individual', peakSearchHz: [11.5, 16], halfWidthHz: 1.5 });
    expect(bandCheckFromParams(paramsFromBandCheck(individual, sigma)).contrast).toEqual(individual);
  });
});

describe('robustness choices', () => {
  const sets = stored.references.flatMap((reference) =>
    stored.averagings.map((averaging) => ({ reference, averaging, fitRangeHz: [1, 40], data: { peaks: [{}] } }) as unknown as PathDataSet),
  );

  it('with no choice keys: every stored value, as src/core/verdict defaultPathChoices; 120 band-summary paths', () => {
    const { choices, test } = pathChoicesFromParams({}, contrast, sigma, stored);
    expect(test).toBe('band-summary');
    // decided on power only unless asked (the core's default)
    expect(choices).toEqual({ ...defaultPathChoices(contrast, sigma, sets), decisions: ['power'] });
    // (absolute × 2 summaries + relative × 2 denominators + residual × 1 fit) × 2 references × 2 averagings × 3 edge variants × fixed/individual (fits, hence peaks, stored)
    expect(enumeratePaths(choices, test)).toHaveLength((2 + 2 + 1) * 2 * 2 * 3 * 2);
    expect(enumeratePaths(choices, 'frequency-wise')).toHaveLength((1 + 2 + 1) * 2 * 2 * 3);
  });

  it('round-trips through the address bar; unticked values drop out; unknown or unstored values are refused', () => {
    const { choices } = pathChoicesFromParams(
      { measures: 'absolute,residual', references: 'recorded', edges: '0', summaries: 'integral' },
      contrast,
      sigma,
      stored,
    );
    expect(choices.measures).toEqual(['absolute', 'residual']);
    expect(choices.bands).toEqual([sigma]);
    expect(enumeratePaths(choices)).toHaveLength((1 + 1) * 1 * 2 * 1 * 2);
    const again = pathChoicesFromParams(paramsFromChoices(choices, 'frequency-wise', sigma), contrast, sigma, stored);
    expect(again).toEqual({ choices, test: 'frequency-wise' });
    expect(pathChoicesFromParams({ references: 'none' }, contrast, sigma, stored).choices.references).toEqual([]);
    expect(() => pathChoicesFromParams({ references: 'average' }, contrast, sigma, stored)).toThrow(RobustnessParamError);
    expect(() => pathChoicesFromParams({ fits: '2-30' }, contrast, sigma, stored)).toThrow(/2–30 Hz is not stored \(stored: 1–40 Hz\)/);
    expect(() => pathChoicesFromParams({ denominators: '45-0.5' }, contrast, sigma, stored)).toThrow(/not a range/);
    expect(() => pathChoicesFromParams({ test: 'fast' }, contrast, sigma, stored)).toThrow(/test holds fast/);
    expect(() => pathChoicesFromParams({ decisions: 'frequency' }, contrast, sigma, stored)).toThrow(
      /decisions holds frequency; allowed: power, power-and-frequency/,
    );
    expect(() => pathChoicesFromParams({ estimators: 'multitaper' }, contrast, sigma, stored)).toThrow(/estimators holds multitaper; allowed: welch/);
    expect(pathChoicesFromParams({}, contrast, sigma, { ...stored, fitRangesHz: [] }).choices.bandDefinitions).toEqual(['fixed']);
    expect(toggled(['a', 'c'], 'b', true, ['a', 'b', 'c'])).toEqual(['a', 'b', 'c']);
    expect(toggled(['a', 'b', 'c'], 'a', false, ['a', 'b', 'c'])).toEqual(['b', 'c']);
  });

  it('decisions: power only, power and frequency, or both (each path once per decision); round-trips through the address bar', () => {
    const { choices } = pathChoicesFromParams(
      { measures: 'residual', references: 'recorded', averagings: 'mean', edges: '0', definitions: 'fixed', decisions: 'power,power-and-frequency' },
      contrast,
      sigma,
      stored,
    );
    expect(choices.decisions).toEqual(['power', 'power-and-frequency']);
    const specs = enumeratePaths(choices);
    expect(specs.map((p) => p.decision)).toEqual(['power', 'power-and-frequency']);
    expect(pathChoicesFromParams(paramsFromChoices(choices, 'band-summary', sigma), contrast, sigma, stored).choices).toEqual(choices);
    expect(pathChoicesFromParams({ decisions: 'power-and-frequency' }, contrast, sigma, stored).choices.decisions).toEqual(['power-and-frequency']);
    // the dot matrix gets a row per decision; the table states the centre test of a frequency path
    const paths: PathResult[] = specs.map((p, i) => ({
      ...p,
      effect: -1,
      ciLow: -1.5,
      ciHigh: -0.5,
      effectKind: 'hedges-g',
      p: i === 0 ? 0.02 : 0.04,
      significant: true,
      n: { control: 10, patient: 10 },
      rank: i + 1,
      ...(p.decision === 'power-and-frequency'
        ? {
            frequency: {
              effect: -2.5,
              ciLow: -3.4,
              ciHigh: -1.6,
              differenceHz: -0.98,
              p: 0.002,
              n: { control: 10, patient: 9 },
              withoutPeak: { control: 0, patient: 1 },
              skipped: null,
            },
          }
        : {}),
    }));
    const curve = {
      paths,
      nPaths: 2,
      nSignificant: 2,
      shareSignificant: 1,
      nSignificantMajoritySign: 2,
      medianEffect: -1,
      alpha: 0.05,
    } as unknown as SpecificationCurve;
    expect(matrixRows(curve).rows.map((r) => r.label)).toEqual(['decided on power', 'decided on power and peak centre']);
    const rows = pathRows(curve);
    expect(rows[0]).toMatchObject({ decision: 'power', centre_effect: null, centre_difference_hz: null, centre_p: null });
    expect(rows[1]).toMatchObject({
      decision: 'power and peak centre',
      centre_effect: -2.5,
      centre_difference_hz: -0.98,
      centre_p: 0.002,
      without_peak: 'control 0, patient 1',
    });
  });

  it('dot matrix: one row per value of a varied choice, one dot per path and choice it used; share stated', () => {
    const { choices } = pathChoicesFromParams(
      { measures: 'absolute,residual', references: 'recorded', averagings: 'mean', summaries: 'mean', definitions: 'fixed' },
      contrast,
      sigma,
      stored,
    );
    const specs = enumeratePaths(choices);
    // invented effects: path i has effect (i − 3), significant when |effect| ≥ 2
    const paths: PathResult[] = specs.map((p, i) => ({
      ...p,
      effect: i - 3,
      ciLow: i - 4,
      ciHigh: i - 2,
      effectKind: 'hedges-g',
      p: Math.abs(i - 3) >= 2 ? 0.01 : 0.5,
      significant: Math.abs(i - 3) >= 2,
      n: { control: 10, patient: 10 },
      rank: i + 1,
    }));
    const curve = {
      paths,
      nPaths: 6,
      nSignificant: 3,
      shareSignificant: 3 / 6,
      nSignificantMajoritySign: 2,
      medianEffect: -0.5,
      alpha: 0.05,
    } as unknown as SpecificationCurve;
    const { rows, fixed } = matrixRows(curve);
    expect(rows.map((r) => r.label)).toEqual(['absolute log10 power', 'residual', 'band 11–17 Hz', 'band 12–16 Hz', 'band 13–15 Hz']);
    expect(fixed).toEqual([
      'reference: recorded',
      'averaging: mean over epochs',
      'estimator: Welch',
      'summary: mean density',
      'band definition: fixed band',
      'decision: decided on power',
      'fit range: fit 1–40 Hz',
    ]);
    const dots = matrixDots(curve, rows);
    expect(dots).toHaveLength(6 * 2); // each path: its measure and its band edges
    expect(dots.filter((d) => d.significant)).toHaveLength(3 * 2); // effects −3, −2 and 2
    // with both estimators stored and both band definitions ticked, each is a row of the matrix
    const both = pathChoicesFromParams(
      { measures: 'residual', references: 'recorded', averagings: 'mean', edges: '0', definitions: 'fixed,individual' },
      contrast,
      sigma,
      { ...stored, estimators: ['welch', 'multitaper'] },
    ).choices;
    const varied = enumeratePaths(both).map((p, i) => ({ ...p, effect: i, rank: i + 1, significant: false }) as unknown as PathResult);
    expect(matrixRows({ ...curve, paths: varied }).rows.map((r) => r.label)).toEqual(['Welch', 'multitaper', 'fixed band', 'individual band']);
    expect(shareSentence(curve)).toBe('3 of 6 paths (50 %) have p < 0.05; 2 of them have the sign of the median effect (median g = −0.50).');
    // effect sizes of different measures are not pooled (issue 23): absolute paths have effects −3, −2, −1, residual ones 0, 1, 2
    expect(measureSentence(curve)).toBe(
      'By measure — absolute log10 power: 2 of 3 paths with p < 0.05, median g = −2.00; residual: 1 of 3 paths with p < 0.05, median g = 1.00.',
    );
  });
});

const t = (p: number, effect = 0.5) => ({
  measure: 'm',
  n: { control: 10, patient: 10 },
  statistic: 'welch-t',
  t: 1,
  df: 18,
  effectKind: 'hedges-g',
  effect,
  ciLow: effect - 1,
  ciHigh: effect + 1,
  level: 0.95,
  difference: 0.1,
  p,
  permutations: 500,
  exact: false,
  seed: 7,
  excluded: [],
});

/** An invented result; its decision family is the core's own Bonferroni over the four tests. */
function fakeResult(peakCenterP: number | null = 0.002): BandCheckResult {
  const tests = {
    raw: t(0.01),
    offset: t(0.2),
    exponent: t(0.5),
    periodic: t(0.004, -1),
    peakCenter: peakCenterP === null ? null : t(peakCenterP, -2),
    peakWidth: peakCenterP === null ? null : t(0.7),
    peakHeight: t(0.03),
    aperiodicInBand: t(0.3),
    lowerFlank: null,
    upperFlank: t(0.4),
    tilt: null,
    relative: t(0.02),
  };
  const family = bonferroni(
    [
      { test: 'periodic', p: 0.004 },
      { test: 'peakCenter', p: peakCenterP ?? 1 },
      { test: 'offset', p: 0.2 },
      { test: 'exponent', p: 0.5 },
    ],
    0.05,
  );
  const skipped =
    peakCenterP === null ? 'too few subjects with a fitted peak in sigma 12–16 Hz (control 1, patient 0; the test needs 2 per group and 3 in all)' : null;
  const peakCenter = {
    withPeak: { control: 10, patient: 10 },
    withoutPeak: { control: 0, patient: 0 },
    means: [
      { name: 'control', n: 10, centerHz: 13.5, widthHz: 1.8 },
      { name: 'patient', n: 10, centerHz: 12.52, widthHz: 1.75 },
    ],
    skipped,
    note: 'Every subject has a fitted peak in sigma 12–16 Hz on at least one of the channels.',
  };
  return {
    kind: 'band-check',
    contrast,
    band: sigma,
    alpha: 0.05,
    tests,
    family,
    peakCenter,
    periodicKind: 'power-and-frequency-shift',
    flanks: { lower: null, upper: { name: 'upper flank', loHz: 16.25, hiHz: 20 }, widthHz: 4, note: 'no room for a lower flank inside the fit range 12–40 Hz' },
    p: 0.008,
    n: { control: 10, patient: 10 },
    verdict: 'band-specific',
  } as unknown as BandCheckResult;
}

describe('band check table and ledger', () => {
  it('effects in the fixed order with peak centre and width; adjusted p for the four deciding tests = min(1, 4p); a missing flank says why', () => {
    const rows = effectRows(fakeResult());
    expect(rows.map((r) => r.effect)).toEqual(EFFECTS.map((e) => e.label));
    expect(rows.map((r) => r.effect)).toEqual([
      'raw band power',
      'aperiodic offset',
      'aperiodic exponent',
      'periodic residual',
      'peak centre frequency',
      'peak width',
      'peak height',
      'aperiodic level in the band',
      'lower flank',
      'upper flank',
      'flank difference (upper − lower)',
      'relative band power',
    ]);
    const deciding = rows.filter((r) => r.decides);
    expect(deciding.map((r) => r.effect)).toEqual(['aperiodic offset', 'aperiodic exponent', 'periodic residual', 'peak centre frequency']);
    // Bonferroni over a family of four (Bonferroni inequality, common practice)
    for (const r of deciding) expect(r.p_adjusted).toBeCloseTo(Math.min(1, 4 * Number(r.p)), 12);
    expect(rows.find((r) => r.effect === 'peak centre frequency')!.p_adjusted).toBeCloseTo(0.008, 12);
    expect(rows.filter((r) => !r.decides).every((r) => r.p_adjusted === null)).toBe(true);
    const lower = rows.find((r) => r.effect === 'lower flank')!;
    expect(lower.size).toBeNull();
    expect(lower.measure).toContain('no room for a lower flank');
  });

  it('a peak centre test that could not run: its row and the width row say why, with no p', () => {
    const rows = effectRows(fakeResult(null));
    for (const name of ['peak centre frequency', 'peak width']) {
      const r = rows.find((x) => x.effect === name)!;
      expect([r.size, r.p, r.p_adjusted]).toEqual([null, null, null]);
      expect(r.measure).toBe('not run: too few subjects with a fitted peak in sigma 12–16 Hz (control 1, patient 0; the test needs 2 per group and 3 in all)');
    }
    expect(peakCentreText(fakeResult(null))).toContain('Peak centre not tested: too few subjects');
  });

  it('the verdict names its periodic kind; the family and the group centres are stated', () => {
    expect(periodicKindText('frequency-shift')).toBe('a shift of the peak frequency (no change of the periodic power found)');
    expect(periodicKindText('power')).toBe('a change of the periodic power (no shift of the peak frequency found)');
    expect(periodicKindText('power-and-frequency-shift')).toBe('a change of the periodic power and a shift of the peak frequency');
    expect(periodicKindText(null)).toBeNull();
    expect(familyText(fakeResult())).toBe(
      'periodic power, peak centre frequency, aperiodic offset and aperiodic exponent: 4 tests, Bonferroni-corrected at α = 0.05 (each passes at p ≤ 0.0125)',
    );
    expect(peakCentreText(fakeResult())).toBe(
      'Mean centre of the highest fitted peak in the band: 13.50 Hz in control (width 1.80 Hz, n 10), 12.52 Hz in patient (width 1.75 Hz, n 10). Every subject has a fitted peak in sigma 12–16 Hz on at least one of the channels.',
    );
  });

  it('a band check gives the ledger its contrast with the band and its adjusted p; counted like the command line', () => {
    const input = bandCheckLedgerInput(fakeResult());
    expect(input).toEqual({ kind: 'band-check', contrast: { ...contrast, band: sigma }, p: 0.008 });
    const entry = ledgerEntry(input, 'cohort.duckdb', 'data1', '2026-01-01T00:00:00.000Z');
    // the command line records a band check as { ...result.contrast, band } (src/cli/band-check.ts): same identity
    expect(entry.key).toBe(analysisKey('band-check', { ...contrast, band: sigma }, null, 'data1'));
    expect(ledgerCounts([entry, entry], 'cohort.duckdb')).toEqual({ analyses: 1, significant: 1, byKind: { 'band-check': 1 }, repeats: 1 });
  });
});

describe('report inputs', () => {
  it('reads a band-check or compare result JSON and refuses anything else, naming the file', () => {
    const r = parseResultJson(JSON.stringify({ kind: 'band-check', contrast, exclusions: [] }), 'sigma.json');
    expect(r.kind).toBe('band-check');
    expect(() => parseResultJson('{', 'x.json')).toThrow(/x.json: cannot be read as JSON/);
    expect(() => parseResultJson(JSON.stringify({ kind: 'report', contrast }), 'y.json')).toThrow(ResultFileError);
    expect(() => parseResultJson(JSON.stringify({ kind: 'compare', exclusions: [] }), 'z.json')).toThrow(/z.json: no "contrast" object/);
  });

  it('Markdown blocks: headings, lists and paragraphs, emphasis markers dropped for the screen', () => {
    const md = '# Methods: band check of sigma\n\n*bandwise is a research tool.*\n\n## Result\n\nVerdict: **band-specific** (rule 2b).\n\n- a: 1\n- b: 2\n';
    expect(markdownBlocks(md)).toEqual([
      { kind: 'h1', text: 'Methods: band check of sigma' },
      { kind: 'p', text: 'bandwise is a research tool.' },
      { kind: 'h2', text: 'Result' },
      { kind: 'p', text: 'Verdict: band-specific (rule 2b).' },
      { kind: 'ul', items: ['a: 1', 'b: 2'] },
    ]);
  });
});
