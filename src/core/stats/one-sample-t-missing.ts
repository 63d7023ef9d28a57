/**
 * One-sample t against zero (and the paired t of second − first) with missing values (NaN) per
 * point: each point over the subjects with a value there (a paired difference is missing when
 * either condition is), sign-flip permutations of whole subjects — the same numbers as
 * scipy.stats.ttest_1samp on that point's values with the NaNs dropped.
 *
 * Used only when the data hold a NaN (one-sample-t.ts is the kernel of complete data). Missing
 * values are stored as 0, so Σ s_j d_j = T − 2·Σ_{flipped} d_j as there, with the point's own
 * count n_p in place of n. A point left out (missing.ts) gets t = 0.
 */
import type { PointStatistic } from './point-statistic.ts';

export class OneSampleTMissing implements PointStatistic {
  readonly nPoints: number;
  readonly nSubjects: number;
  readonly scheme = 'sign-flip' as const;
  readonly df: number;
  private readonly d: Float64Array; // values, 0 where missing
  private readonly count: Float64Array; // values per point
  private readonly total: Float64Array;
  private readonly totalSq: Float64Array;
  private readonly keep: Uint8Array;
  private readonly acc: Float64Array;

  /** d: subjects × points row-major, NaN = missing; keep: 1 for points with enough values. */
  constructor(d: ArrayLike<number>, nSubjects: number, nPoints: number, keep: Uint8Array) {
    const n = nSubjects;
    const P = nPoints;
    this.nPoints = P;
    this.nSubjects = n;
    this.df = n - 1;
    this.keep = keep;
    this.d = new Float64Array(n * P);
    this.count = new Float64Array(P);
    this.total = new Float64Array(P);
    this.totalSq = new Float64Array(P);
    for (let s = 0; s < n; s++) {
      for (let p = 0; p < P; p++) {
        const x = d[s * P + p];
        if (Number.isNaN(x)) continue;
        this.d[s * P + p] = x;
        this.count[p]++;
        this.total[p] += x;
        this.totalSq[p] += x * x;
      }
    }
    this.acc = new Float64Array(P);
  }

  observedRelabelling(): Int32Array {
    return new Int32Array(this.nSubjects).fill(1);
  }

  compute(signs: Int32Array, stat: Float64Array, df?: Float64Array): void {
    const n = this.nSubjects;
    const P = this.nPoints;
    const acc = this.acc;
    acc.fill(0);
    for (let s = 0; s < n; s++) {
      if (signs[s] !== -1) continue;
      const off = s * P;
      for (let p = 0; p < P; p++) acc[p] += this.d[off + p];
    }
    for (let p = 0; p < P; p++) {
      const np = this.count[p];
      if (this.keep[p] === 0) {
        stat[p] = 0;
        if (df) df[p] = NaN;
        continue;
      }
      // S = T − 2·Σ_{flipped} d; SS = Σd² − S²/n_p; t = (S/n_p)/√(SS/((n_p − 1)·n_p))
      const sum = this.total[p] - 2 * acc[p];
      const ss = Math.max(0, this.totalSq[p] - (sum * sum) / np);
      const se2 = ss / (np - 1) / np;
      stat[p] = se2 > 0 ? sum / np / Math.sqrt(se2) : 0;
      if (df) df[p] = np - 1;
    }
  }

  computeNull(relabelling: Int32Array, stat: Float64Array): void {
    this.compute(relabelling, stat);
  }
}
