// Clopper–Pearson interval against scipy: the exact interval's usual closed form through beta
// quantiles (Clopper & Pearson 1934; scipy.stats.beta.ppf(a/2, x, k − x + 1) and
// beta.ppf(1 − a/2, x + 1, k − x), 0 and 1 at the ends), computed by the machine's scipy.
import { describe, expect, it } from 'vitest';
import { clopperPearson } from '../../src/core/planning/index.ts';
import { runPython } from '../helpers/python.ts';

const cases: [number, number, number][] = [
  [0, 10, 0.95],
  [1, 10, 0.95],
  [5, 10, 0.95],
  [10, 10, 0.95],
  [7, 200, 0.95],
  [100, 200, 0.95],
  [199, 200, 0.95],
  [13, 300, 0.99],
  [0, 1, 0.95],
  [1, 1, 0.95],
  [523, 1000, 0.95],
];

describe('Clopper–Pearson interval', () => {
  it('matches scipy.stats.beta quantiles to 1e-9', () => {
    const expected = runPython<[number, number][]>(
      `from scipy.stats import beta
cases = ${JSON.stringify(cases)}
out = []
for x, k, level in cases:
    a = 1 - level
    lo = 0.0 if x == 0 else float(beta.ppf(a / 2, x, k - x + 1))
    hi = 1.0 if x == k else float(beta.ppf(1 - a / 2, x + 1, k - x))
    out.append([lo, hi])
print(json.dumps(out))`,
    );
    cases.forEach(([x, k, level], i) => {
      const ci = clopperPearson(x, k, level);
      expect(ci.low, `${x}/${k}`).toBeCloseTo(expected[i][0], 9);
      expect(ci.high, `${x}/${k}`).toBeCloseTo(expected[i][1], 9);
    });
  });

  it('refuses impossible counts with the bad value', () => {
    expect(() => clopperPearson(11, 10)).toThrow('invalid number of successes: 11 of 10');
    expect(() => clopperPearson(1, 0)).toThrow('invalid number of trials: 0');
    expect(() => clopperPearson(1, 10, 1)).toThrow('invalid confidence level: 1');
  });
});
