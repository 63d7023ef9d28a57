/**
 * One-sample t against zero — and the paired t, which is the one-sample t of the within-subject
 * differences (second − first) — with sign-flip permutations: the same numbers as
 * scipy.stats.ttest_1samp(d, 0) and scipy.stats.ttest_rel(second, first).
 *
 * Missing values (NaN; a paired difference is missing when either condition is): each point is
 * taken over the subjects with a value there, as ttest_1samp on that point's values with the NaNs
 * dropped; sign flips still move whole subjects. A point left out (missing.ts, `keep` 0) gets
 * t = 0. Complete data give every point n_p = n.
 *
 * Speed: Σd² does not change under sign flips and Σ s_j d_j = T − 2·Σ_{flipped} d_j (missing
 * values stored as 0), so per relabelling only the flipped rows are summed (about half of them).
 */
import type { PointStatistic } from './point-statistic.ts';

export class OneSampleT implements PointStatistic {
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

  /** d: subjects × points row-major, NaN = missing; keep: 1 for points with enough values (default every point). */
  constructor(d: ArrayLike<number>, nSubjects: number, nPoints: number, keep: Uint8Array = new Uint8Array(nPoints).fill(1)) {
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
      const np = this.count[p];
      if (this.keep[p] === 0) {
        stat[p] = 0;
        if (df) df[p] = NaN;
        continue;
      }
      // S = Σ s_j d_j = T − 2·Σ_{s_j = −1} d_j; SS = Σd² − S²/n_p; t = (S/n_p)/√(SS/((n_p − 1)·n_p))
      const sum = this.total[p] - 2 * acc[p];
      const ss = Math.max(0, this.totalSq[p] - (sum * sum) / np);
      const se2 = ss / (np - 1) / np;
      stat[p] = se2 > 0 ? sum / np / Math.sqrt(se2) : 0;
      if (df) df[p] = np - 1;
    }
  }
}
