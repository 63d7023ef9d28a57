/**
 * One-sample t against zero — and the paired t, which is the one-sample t of the within-subject
 * differences (second − first) — with sign-flip permutations: the same numbers as
 * scipy.stats.ttest_1samp(d, 0) and scipy.stats.ttest_rel(second, first).
 *
 * Speed: Σd² does not change under sign flips and Σ s_j d_j = T − 2·Σ_{flipped} d_j, so per
 * relabelling only the flipped rows are summed (about half of them).
 */
import type { PointStatistic } from './point-statistic.ts';

export class OneSampleT implements PointStatistic {
  readonly nPoints: number;
  readonly nSubjects: number;
  readonly scheme = 'sign-flip' as const;
  readonly df: number;
  private readonly d: Float64Array;
  private readonly total: Float64Array;
  private readonly totalSq: Float64Array;
  private readonly acc: Float64Array;

  /** d: subjects × points row-major (the values, or the paired differences). */
  constructor(d: ArrayLike<number>, nSubjects: number, nPoints: number) {
    this.nPoints = nPoints;
    this.nSubjects = nSubjects;
    this.df = nSubjects - 1;
    this.d = Float64Array.from(d);
    this.total = new Float64Array(nPoints);
    this.totalSq = new Float64Array(nPoints);
    for (let s = 0; s < nSubjects; s++) {
      for (let p = 0; p < nPoints; p++) {
        const x = this.d[s * nPoints + p];
        this.total[p] += x;
        this.totalSq[p] += x * x;
      }
    }
    this.acc = new Float64Array(nPoints);
  }

  computeNull(relabelling: Int32Array, stat: Float64Array): void {
    this.compute(relabelling, stat);
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
      // S = Σ s_j d_j = T − 2·Σ_{s_j = −1} d_j; SS = Σd² − S²/n; t = (S/n)/√(SS/((n − 1)·n))
      const sum = this.total[p] - 2 * acc[p];
      const ss = Math.max(0, this.totalSq[p] - (sum * sum) / n);
      const se2 = ss / (n - 1) / n;
      stat[p] = se2 > 0 ? sum / n / Math.sqrt(se2) : 0;
      if (df) df[p] = n - 1;
    }
  }
}
