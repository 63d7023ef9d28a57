/**
 * Sample quantile by linear interpolation between order statistics: Hyndman & Fan (1996, The
 * American Statistician 50:361–365) definition 7, h = (n − 1)·q — R's default and numpy.quantile's
 * default ('linear'). Sorts a copy; NaN for an empty sample.
 */
export function quantileSorted(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  if (!(q >= 0 && q <= 1)) throw new RangeError(`quantile level must lie in [0, 1], got ${q}`);
  // Q(q) = x_⌊h⌋ + (h − ⌊h⌋)·(x_⌊h⌋+1 − x_⌊h⌋), h = (n − 1)·q, 0-based
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export function quantiles(values: ArrayLike<number>, qs: readonly number[]): number[] {
  const sorted = Float64Array.from(values).sort();
  return qs.map((q) => quantileSorted(sorted, q));
}
