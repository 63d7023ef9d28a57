/**
 * Distribution functions for the point statistics: Student t CDF and quantile, normal quantile
 * (the numerics are @stdlib's), two-tailed p-values and the Fisher z transform of a correlation.
 */
import tCdfStdlib from '@stdlib/stats-base-dists-t-cdf';
import tQuantileStdlib from '@stdlib/stats-base-dists-t-quantile';
import normalQuantileStdlib from '@stdlib/stats-base-dists-normal-quantile';

/** P(T ≤ t) for Student's t with df degrees of freedom (df > 0, not necessarily an integer). */
export function tCdf(t: number, df: number): number {
  return tCdfStdlib(t, df);
}

/** The t with P(T ≤ t) = p, for Student's t with df degrees of freedom. */
export function tQuantile(p: number, df: number): number {
  return tQuantileStdlib(p, df);
}

/** The z with P(Z ≤ z) = p for the standard normal distribution. */
export function normalQuantile(p: number): number {
  return normalQuantileStdlib(p, 0, 1);
}

/** Two-tailed p = 2·P(T ≥ |t|) = 2·F(−|t|; df); a NaN statistic gives NaN. */
export function twoTailedP(t: number, df: number): number {
  return Math.min(1, 2 * tCdfStdlib(-Math.abs(t), df));
}

/** Critical |t| of a two-tailed test at level alpha: F⁻¹(1 − alpha/2; df). */
export function twoTailedCriticalT(alpha: number, df: number): number {
  if (!(alpha > 0 && alpha < 1)) throw new RangeError(`two-tailed alpha must lie in (0, 1), got ${alpha}`);
  if (!(df > 0)) throw new RangeError(`degrees of freedom must be positive, got ${df}`);
  return tQuantileStdlib(1 - alpha / 2, df);
}

/** Fisher (1915) z = atanh(r) = ½·ln((1 + r)/(1 − r)); approximately normal with SE 1/√(n − 3). */
export function fisherZ(r: number): number {
  return Math.atanh(r);
}

/** Inverse Fisher transform r = tanh(z). */
export function fisherZInverse(z: number): number {
  return Math.tanh(z);
}

/** t of a correlation, t = r·√(df / (1 − r²)) with df = n − 2 (n − 2 − k with k nuisance columns). */
export function correlationToT(r: number, df: number): number {
  const denom = 1 - r * r;
  if (denom <= 0) return r > 0 ? Infinity : -Infinity;
  return r * Math.sqrt(df / denom);
}
