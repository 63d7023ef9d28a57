import { describe, expect, it } from 'vitest';
import { tCdf, tQuantile, normalQuantile, twoTailedP, fisherZ, fisherZInverse } from '../../src/core/stats/distributions.ts';
import { runPython } from '../helpers/python.ts';

describe('t and normal distributions', () => {
  it('upper critical values match the published t table', () => {
    // NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.2 "Critical values of the
    // Student's t distribution" (upper-tail probability α, 3 decimals) — values from memory.
    const table: [df: number, alpha: number, t: number][] = [
      [1, 0.05, 6.314],
      [1, 0.025, 12.706],
      [2, 0.025, 4.303],
      [5, 0.025, 2.571],
      [10, 0.05, 1.812],
      [10, 0.025, 2.228],
      [10, 0.005, 3.169],
      [20, 0.025, 2.086],
      [30, 0.025, 2.042],
      [100, 0.025, 1.984],
    ];
    for (const [df, alpha, t] of table) expect(Math.abs(tQuantile(1 - alpha, df) - t), `df ${df}, α ${alpha}`).toBeLessThan(5e-4);
    // the same handbook's normal table (§1.3.6.7.1), from memory: z_{0.975} = 1.960, z_{0.995} = 2.576
    expect(Math.abs(normalQuantile(0.975) - 1.96)).toBeLessThan(5e-4);
    expect(Math.abs(normalQuantile(0.995) - 2.576)).toBeLessThan(5e-4);
  });

  it('CDF, quantile and two-tailed p equal scipy.stats.t for fractional df', () => {
    const ts = [-4.1, -1.3, 0, 0.7, 2.5, 6.2];
    const dfs = [1.5, 3, 7.25, 29.9, 180];
    const ps = [0.001, 0.025, 0.3, 0.5, 0.9, 0.9995];
    const ref = runPython<{ cdf: number[]; q: number[]; p2: number[] }>(
      `from scipy import stats
ts = ${JSON.stringify(ts)}; dfs = ${JSON.stringify(dfs)}; ps = ${JSON.stringify(ps)}
print(json.dumps({"cdf": [float(stats.t.cdf(t, d)) for d in dfs for t in ts],
  "q": [float(stats.t.ppf(p, d)) for d in dfs for p in ps],
  "p2": [float(2 * stats.t.sf(abs(t), d)) for d in dfs for t in ts]}))`,
    );
    let i = 0;
    for (const d of dfs)
      for (const t of ts) {
        expect(Math.abs(tCdf(t, d) - ref.cdf[i])).toBeLessThan(1e-10);
        expect(Math.abs(twoTailedP(t, d) - ref.p2[i])).toBeLessThan(1e-10);
        i++;
      }
    i = 0;
    for (const d of dfs) for (const p of ps) expect(Math.abs(tQuantile(p, d) - ref.q[i++]) / Math.max(1, Math.abs(ref.q[i - 1]))).toBeLessThan(1e-8);
  });

  it('Fisher z is atanh and its inverse tanh (numpy)', () => {
    const rs = [-0.95, -0.3, 0, 0.42, 0.999];
    const ref = runPython<number[]>(`print(json.dumps([float(numpy.arctanh(r)) for r in ${JSON.stringify(rs)}]))`);
    rs.forEach((r, i) => {
      expect(fisherZ(r)).toBeCloseTo(ref[i], 12);
      expect(fisherZInverse(fisherZ(r))).toBeCloseTo(r, 12);
    });
  });
});
