// Group mean with its 95 % confidence interval, per point, over subjects (rows).
import { tQuantile } from '../../../core/stats/distributions.ts';

export interface MeanBand {
  n: number;
  mean: Float64Array;
  low: Float64Array;
  high: Float64Array;
}

/**
 * Mean of each column of a subjects × points matrix and its confidence interval
 * mean ± t_{(1+level)/2, n−1} · s/√n, s the sample standard deviation (Student 1908; common practice).
 * With one subject the interval is the mean itself.
 */
export function meanWithInterval(rows: readonly Float64Array[], nPoints: number, level = 0.95): MeanBand {
  const n = rows.length;
  const mean = new Float64Array(nPoints);
  const low = new Float64Array(nPoints);
  const high = new Float64Array(nPoints);
  const t = n > 1 ? tQuantile((1 + level) / 2, n - 1) : 0;
  for (let j = 0; j < nPoints; j++) {
    let s = 0;
    for (const r of rows) s += r[j];
    const m = n > 0 ? s / n : Number.NaN;
    let ss = 0;
    for (const r of rows) ss += (r[j] - m) * (r[j] - m);
    const se = n > 1 ? Math.sqrt(ss / (n - 1) / n) : 0;
    mean[j] = m;
    low[j] = m - t * se;
    high[j] = m + t * se;
  }
  return { n, mean, low, high };
}
