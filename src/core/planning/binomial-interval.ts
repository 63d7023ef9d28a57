/**
 * Exact (Clopper–Pearson 1934, Biometrika 26:404–413) confidence interval of a binomial
 * proportion: the lower limit is the p with P(X ≥ x; k, p) = (1 − level)/2, the upper the p with
 * P(X ≤ x; k, p) = (1 − level)/2 (0 and 1 at x = 0 and x = k). Found by bisection on @stdlib's
 * binomial CDF; the same numbers as the beta-quantile form scipy.stats.beta.ppf(a/2, x, k − x + 1)
 * and beta.ppf(1 − a/2, x + 1, k − x). Conservative: it covers at least `level` for every p.
 */
import binomialCdf from '@stdlib/stats-base-dists-binomial-cdf';

export interface ProportionInterval {
  low: number;
  high: number;
}

/** p in [0, 1] with f(p) = target for f monotone in p (increasing: rising), by 60 halvings (width < 1e-18). */
function solve(f: (p: number) => number, target: number, rising: boolean): number {
  let lo = 0;
  let hi = 1;
  for (let i = 0; i < 60; i++) {
    const mid = 0.5 * (lo + hi);
    if (f(mid) < target === rising) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** Clopper–Pearson interval of x successes in k trials at the given level (default 0.95). */
export function clopperPearson(x: number, k: number, level = 0.95): ProportionInterval {
  if (!(Number.isInteger(k) && k >= 1)) throw new RangeError(`invalid number of trials: ${k}`);
  if (!(Number.isInteger(x) && x >= 0 && x <= k)) throw new RangeError(`invalid number of successes: ${x} of ${k}`);
  if (!(level > 0 && level < 1)) throw new RangeError(`invalid confidence level: ${level}`);
  const tail = (1 - level) / 2;
  // P(X ≥ x; p) = 1 − F(x − 1; p) rises with p
  const low = x === 0 ? 0 : solve((p) => 1 - binomialCdf(x - 1, k, p), tail, true);
  // P(X ≤ x; p) = F(x; p) falls as p rises
  const high = x === k ? 1 : solve((p) => binomialCdf(x, k, p), tail, false);
  return { low, high };
}
