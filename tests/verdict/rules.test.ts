/**
 * The decision rules of the band check (src/core/verdict/rules.ts, README "Band check") on
 * hand-made test results: which rule fires for each pattern of passing tests, the Bonferroni
 * family of four, the periodic kind, and the words of the frequency shift. The rule table in the
 * README is the reference; the simulated validation is in validation.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { decideVerdict, type PeakCenterInputs, type ScalarTest, type VerdictInputs } from '../../src/core/verdict/index.ts';

const words = { up: 'higher in patient than in control', down: 'lower in patient than in control' };

function test(p: number, effect: number, difference: number | null = effect): ScalarTest {
  return {
    measure: 'x',
    n: { control: 20, patient: 20 },
    statistic: 'welch-t',
    t: effect * 3,
    df: 38,
    effectKind: 'hedges-g',
    effect,
    ciLow: effect - 0.6,
    ciHigh: effect + 0.6,
    level: 0.95,
    difference,
    p,
    permutations: 300,
    exact: false,
    seed: 1,
    excluded: [],
  };
}

const pass = (effect: number, difference?: number) => test(0.004, effect, difference); // below α/4 = 0.0125
const fail = (effect = 0.1) => test(0.5, effect);
const centre = (t: ScalarTest | null): PeakCenterInputs => ({
  test: t,
  means: [
    { name: 'control', centerHz: 13.5 },
    { name: 'patient', centerHz: 12.5 },
  ],
  withoutPeak: { control: 0, patient: 2 },
  skipped: t ? null : 'too few subjects with a fitted peak in sigma 12–16 Hz (control 1, patient 0; the test needs 2 per group and 3 in all)',
});

function inputs(o: Partial<VerdictInputs>): VerdictInputs {
  return {
    periodic: fail(),
    peakCenter: centre(fail()),
    offset: fail(),
    exponent: fail(),
    aperiodicInBand: fail(),
    lowerFlank: fail(),
    upperFlank: fail(),
    tilt: fail(),
    ...o,
  };
}

describe('decision rules with the peak-centre test', () => {
  it('Bonferroni over four tests: p = 0.015 passes at α/3 but not at α/4', () => {
    const d = decideVerdict(inputs({ offset: test(0.015, 1) }), 'sigma', words);
    expect(d.family.map((f) => [f.test, f.threshold, f.passed])).toEqual([
      ['periodic', 0.0125, false],
      ['peakCenter', 0.0125, false],
      ['offset', 0.0125, false],
      ['exponent', 0.0125, false],
    ]);
    expect(d.family[2].adjustedP).toBeCloseTo(0.06, 12);
    expect(d.verdict).toBe('no-evidence');
  });

  it('2d: only the centre passes → band-specific frequency shift, named in Hz with the group means and the left-out counts', () => {
    const d = decideVerdict(inputs({ peakCenter: centre(pass(-2.5, -1.02)) }), 'sigma', words);
    expect([d.verdict, d.rule, d.periodicKind]).toEqual(['band-specific', '2d', 'frequency-shift']);
    expect(d.sentence).toMatch(
      /^Band-specific frequency shift: the sigma peak is 1\.0 Hz lower in patient than in control \(centre of the highest fitted peak in the band, mean 13\.50 Hz in control, 12\.50 Hz in patient; g = −2\.50 .*left out without a peak in the band: control 0, patient 2\)/,
    );
  });

  it('2c: the centre passes with an aperiodic change that moves the band level → mixed', () => {
    const d = decideVerdict(inputs({ peakCenter: centre(pass(-2, -0.5)), offset: pass(1.5), aperiodicInBand: test(0.01, 1.2) }), 'sigma', words);
    expect([d.verdict, d.rule, d.periodicKind]).toEqual(['mixed', '2c', 'frequency-shift']);
    expect(d.sentence).toContain('the sigma peak is 0.5 Hz lower');
    // the same aperiodic change leaving the band level alone: band-specific, the change named
    const e = decideVerdict(inputs({ peakCenter: centre(pass(-2, -0.5)), offset: pass(1.5), aperiodicInBand: test(0.3, 0.2) }), 'sigma', words);
    expect([e.verdict, e.rule]).toEqual(['band-specific', '2d']);
    expect(e.sentence).toContain('the aperiodic offset');
  });

  it('2b with the shift named: power and centre both pass → power-and-frequency-shift; a power change alone → power', () => {
    const both = decideVerdict(inputs({ periodic: pass(-1.4), peakCenter: centre(pass(-2.5, -1)) }), 'sigma', words);
    expect([both.verdict, both.rule, both.periodicKind]).toEqual(['band-specific', '2b', 'power-and-frequency-shift']);
    expect(both.sentence).toContain('the sigma peak is 1.0 Hz lower');
    const power = decideVerdict(inputs({ periodic: pass(-1.4) }), 'sigma', words);
    expect([power.verdict, power.periodicKind]).toEqual(['band-specific', 'power']);
    expect(power.sentence).not.toContain('peak is');
  });

  it('a centre test that could not run counts as not passing, and the sentence says why', () => {
    const d = decideVerdict(inputs({ peakCenter: centre(null), offset: pass(1.5), lowerFlank: pass(1), upperFlank: pass(1) }), 'sigma', words);
    expect([d.verdict, d.rule, d.periodicKind]).toEqual(['broadband-offset', '3b', null]);
    expect(d.family[1]).toMatchObject({ test: 'peakCenter', p: 1, passed: false });
    expect(d.sentence).toContain('peak centre not tested: too few subjects with a fitted peak');
  });

  it('a covariate has no difference in Hz: the direction only', () => {
    const d = decideVerdict(
      inputs({ peakCenter: { ...centre({ ...test(0.002, -0.6, null), effectKind: 'r' }), means: [{ name: 'all subjects', centerHz: 13.1 }] } }),
      'sigma',
      { up: 'higher with higher age', down: 'lower with higher age' },
    );
    expect(d.sentence).toContain('the sigma peak frequency is lower with higher age (centre of the highest fitted peak in the band; r');
  });
});
