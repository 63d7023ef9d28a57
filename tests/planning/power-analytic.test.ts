// Simulated power against the analytical power of Welch's t (STANDARDS.md "Power of Welch's t for
// planning checks"): for one channel × one band-mean measure and no correction, a simulated study
// is a two-sample t test of n vs n values drawn from the reference group's values, so its power is
// P(|T| > t_{0.975}(2n − 2)) with T noncentral t, df = 2n − 2, δ = Δ/(σ·√(2/n)) — computed by
// scipy.stats.nct, with σ the SD of the reference values (ddof 0: the distribution drawn from).
// Size: 400 synthetic recordings (200 reference subjects, Fp1, N2 sigma 12–16 Hz log10 band power,
// σ ≈ 0.19), n = 8, 16, 32, 4000 simulations each, effects 0 and 0.12 log10; no permutations are
// needed without correction, about 3 s on one core.
// Tolerance: 2.576 binomial standard errors of the analytical value (99 %) plus 0.01 for what
// the formula leaves out — Welch's df per study instead of 2n − 2, and the reference values being
// 200 draws rather than a normal distribution (measured: differences of 0.002–0.013 at 3000
// simulations, seed 5).
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { simulatePower } from '../../src/core/planning/index.ts';
import { runPython } from '../helpers/python.ts';
import { syntheticCohort } from './synthetic-cohort.ts';
import { preparePower } from '../../src/core/planning/index.ts';

const { data } = syntheticCohort(400, 1, 11);
const contrast = parseContrast({
  design: 'groups',
  groups: ['control', 'patient'],
  stage: 'N2',
  measure: 'band-power',
  bands: ['sigma'],
  channels: ['Fp1'],
  correction: 'none',
});
const SIZES = [8, 16, 32];
const K = 4000;
const plan = (effect: number) => ({
  referenceGroup: 'control',
  effect,
  band: { name: 'sigma', loHz: 12, hiHz: 16 },
  channels: 'all' as const,
  nPerGroup: SIZES,
  simulations: K,
  seed: 5,
  alpha: 0.05,
});

function analytic(effect: number): number[] {
  const reference = preparePower(contrast, plan(effect), data).reference;
  expect(reference.nSubjects).toBe(200);
  return runPython<number[]>(
    `from scipy.stats import nct, t
x = numpy.fromfile(inputs['x'])
s = x.std()
out = []
for n in ${JSON.stringify(SIZES)}:
    df = 2 * n - 2
    nc = ${effect} / (s * numpy.sqrt(2 / n))
    c = t.ppf(0.975, df)
    out.append(float(nct.sf(c, df, nc) + nct.cdf(-c, df, nc)))
print(json.dumps(out))`,
    { x: reference.data },
  );
}

describe('power of one channel × band mean without correction', () => {
  it.each([0, 0.12])("matches the noncentral t power of Welch's t (effect %s log10)", (effect) => {
    const expected = analytic(effect);
    const r = simulatePower(contrast, plan(effect), data);
    r.curve.forEach((p, i) => {
      const tolerance = 2.576 * Math.sqrt((expected[i] * (1 - expected[i])) / K) + 0.01;
      console.log(
        `effect ${effect}, n ${p.nPerGroup}: simulated ${p.power.toFixed(4)} [${p.ciLow.toFixed(4)}, ${p.ciHigh.toFixed(4)}], analytical ${expected[i].toFixed(4)}, tolerance ${tolerance.toFixed(4)}`,
      );
      expect(Math.abs(p.power - expected[i])).toBeLessThanOrEqual(tolerance);
      expect(p.simulations).toBe(K);
    });
    if (effect > 0) {
      // the check has teeth: the three sizes differ by far more than the tolerance
      expect(expected[1] - expected[0]).toBeGreaterThan(0.1);
      expect(expected[2] - expected[1]).toBeGreaterThan(0.1);
    }
  });
});
