/**
 * Two independent groups with missing values (NaN) per point: Welch's t (Welch 1947; df by
 * Welch–Satterthwaite, Satterthwaite 1946) or Student's pooled-variance t, group 1 minus group 0,
 * each point over the subjects with a value there — the same numbers as
 * scipy.stats.ttest_ind(group1, group0, equal_var=…) on that point's values with the NaNs dropped.
 *
 * Used only when the data hold a NaN (two-group-t.ts is the kernel of complete data). Per
 * relabelling, Σx, Σx² and the count of values are summed over the group-1 subjects at every
 * point (data centred per point over its values, missing values stored as 0 with a 0/1 mask);
 * group 0's follow from the totals. A point left out (missing.ts) gets t = 0, and so does a
 * point where a relabelling leaves a group with fewer than 2 values (no variance).
 */
import type { PointStatistic } from './point-statistic.ts';
import type { TwoGroupVariance } from './two-group-t.ts';

export class TwoGroupTMissing implements PointStatistic {
  readonly nPoints: number;
  readonly nSubjects: number;
  readonly scheme = 'relabel' as const;
  readonly df: number;
  private readonly labels: Uint8Array;
  private readonly variance: TwoGroupVariance;
  private readonly keep: Uint8Array;
  private readonly x: Float64Array; // centred values, 0 where missing
  private readonly has: Float64Array; // 1 where a value exists
  private readonly total: Float64Array;
  private readonly totalSq: Float64Array;
  private readonly totalN: Float64Array;
  private readonly accSum: Float64Array;
  private readonly accSq: Float64Array;
  private readonly accN: Float64Array;

  /** data: subjects × points row-major, NaN = missing; labels 0/1; keep: 1 for points with enough values. */
  constructor(data: ArrayLike<number>, nSubjects: number, nPoints: number, labels: Uint8Array, variance: TwoGroupVariance, keep: Uint8Array) {
    const n = nSubjects;
    const P = nPoints;
    this.nPoints = P;
    this.nSubjects = n;
    this.df = n - 2;
    this.labels = labels;
    this.variance = variance;
    this.keep = keep;
    const mean = new Float64Array(P);
    const count = new Float64Array(P);
    for (let s = 0; s < n; s++) {
      for (let p = 0; p < P; p++) {
        const v = data[s * P + p];
        if (Number.isNaN(v)) continue;
        mean[p] += v;
        count[p]++;
      }
    }
    for (let p = 0; p < P; p++) mean[p] = count[p] > 0 ? mean[p] / count[p] : 0;
    this.x = new Float64Array(n * P);
    this.has = new Float64Array(n * P);
    this.total = new Float64Array(P);
    this.totalSq = new Float64Array(P);
    this.totalN = count;
    for (let s = 0; s < n; s++) {
      for (let p = 0; p < P; p++) {
        const v = data[s * P + p];
        if (Number.isNaN(v)) continue;
        const c = v - mean[p];
        this.x[s * P + p] = c;
        this.has[s * P + p] = 1;
        this.total[p] += c;
        this.totalSq[p] += c * c;
      }
    }
    this.accSum = new Float64Array(P);
    this.accSq = new Float64Array(P);
    this.accN = new Float64Array(P);
  }

  observedRelabelling(): Int32Array {
    return Int32Array.from(this.labels);
  }

  compute(relabelling: Int32Array, stat: Float64Array, df?: Float64Array): void {
    const n = this.nSubjects;
    const P = this.nPoints;
    const { x, has, accSum, accSq, accN } = this;
    accSum.fill(0);
    accSq.fill(0);
    accN.fill(0);
    for (let s = 0; s < n; s++) {
      if (relabelling[s] !== 1) continue;
      const off = s * P;
      for (let p = 0; p < P; p++) {
        const v = x[off + p];
        accSum[p] += v;
        accSq[p] += v * v;
        accN[p] += has[off + p];
      }
    }
    const welch = this.variance === 'welch';
    for (let p = 0; p < P; p++) {
      const n1 = accN[p];
      const n0 = this.totalN[p] - n1;
      if (this.keep[p] === 0 || n1 < 2 || n0 < 2) {
        stat[p] = 0;
        if (df) df[p] = NaN;
        continue;
      }
      const s1 = accSum[p];
      const s0 = this.total[p] - s1;
      // sums of squared deviations SS_g = Q_g − S_g²/n_g over the point's values
      const ss1 = Math.max(0, accSq[p] - (s1 * s1) / n1);
      const ss0 = Math.max(0, this.totalSq[p] - accSq[p] - (s0 * s0) / n0);
      const diff = s1 / n1 - s0 / n0;
      if (welch) {
        // Welch (1947): t = (m1 − m0)/√(v1/n1 + v0/n0); df by Satterthwaite (1946), per point
        const a = ss1 / (n1 - 1) / n1;
        const b = ss0 / (n0 - 1) / n0;
        const se2 = a + b;
        stat[p] = se2 > 0 ? diff / Math.sqrt(se2) : 0;
        if (df) df[p] = se2 > 0 ? (se2 * se2) / ((a * a) / (n1 - 1) + (b * b) / (n0 - 1)) : n1 + n0 - 2;
      } else {
        // Student: s_p² = (SS1 + SS0)/(n1 + n0 − 2), t = (m1 − m0)/√(s_p²(1/n1 + 1/n0))
        const se2 = ((ss1 + ss0) / (n1 + n0 - 2)) * (1 / n1 + 1 / n0);
        stat[p] = se2 > 0 ? diff / Math.sqrt(se2) : 0;
        if (df) df[p] = n1 + n0 - 2;
      }
    }
  }

  computeNull(relabelling: Int32Array, stat: Float64Array): void {
    this.compute(relabelling, stat);
  }
}
