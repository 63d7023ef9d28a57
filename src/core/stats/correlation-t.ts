/**
 * Correlation of a covariate with the measure at every point — Pearson's r, or Spearman's ρ as
 * Pearson's r of the ranks (ties averaged) — reported as t = r·√((n − 2)/(1 − r²)) with n − 2 df,
 * so clusters use a t threshold; permutations reorder the covariate across subjects. The same
 * numbers as scipy.stats.pearsonr / spearmanr (whose p-values use this t with n − 2 df).
 */
import type { PointStatistic } from './point-statistic.ts';
import { averageRanks } from './ranks.ts';
import { correlationToT } from './distributions.ts';

export type CorrelationMethod = 'pearson' | 'spearman';

export class CorrelationT implements PointStatistic {
  readonly nPoints: number;
  readonly nSubjects: number;
  readonly scheme = 'permute-rows' as const;
  readonly df: number;
  private readonly y: Float64Array; // n × P, centred per point (ranks first for Spearman)
  private readonly x: Float64Array; // centred covariate (ranks first for Spearman)
  private readonly scale: Float64Array; // 1/√(Σx²·Σy²) per point (0 for a constant point)
  private readonly acc: Float64Array;
  /** r of the last `compute` call */
  readonly r: Float64Array;

  constructor(data: ArrayLike<number>, nSubjects: number, nPoints: number, covariate: ArrayLike<number>, method: CorrelationMethod) {
    const n = nSubjects;
    const P = nPoints;
    this.nPoints = P;
    this.nSubjects = n;
    this.df = n - 2;
    const x = method === 'spearman' ? averageRanks(covariate) : Float64Array.from(covariate);
    this.y = new Float64Array(n * P);
    const column = new Float64Array(n);
    for (let p = 0; p < P; p++) {
      for (let s = 0; s < n; s++) column[s] = data[s * P + p];
      const v = method === 'spearman' ? averageRanks(column) : column;
      let mean = 0;
      for (let s = 0; s < n; s++) mean += v[s];
      mean /= n;
      for (let s = 0; s < n; s++) this.y[s * P + p] = v[s] - mean;
    }
    let mx = 0;
    for (let s = 0; s < n; s++) mx += x[s];
    mx /= n;
    let sxx = 0;
    for (let s = 0; s < n; s++) {
      x[s] -= mx;
      sxx += x[s] * x[s];
    }
    this.x = x;
    this.scale = new Float64Array(P);
    const syy = new Float64Array(P);
    for (let s = 0; s < n; s++) for (let p = 0; p < P; p++) syy[p] += this.y[s * P + p] ** 2;
    for (let p = 0; p < P; p++) this.scale[p] = sxx > 0 && syy[p] > 0 ? 1 / Math.sqrt(sxx * syy[p]) : 0;
    this.acc = new Float64Array(P);
    this.r = new Float64Array(P);
  }

  computeNull(relabelling: Int32Array, stat: Float64Array): void {
    this.compute(relabelling, stat);
  }

  observedRelabelling(): Int32Array {
    return Int32Array.from({ length: this.nSubjects }, (_, i) => i);
  }

  compute(order: Int32Array, stat: Float64Array, df?: Float64Array): void {
    const n = this.nSubjects;
    const P = this.nPoints;
    const acc = this.acc;
    acc.fill(0);
    // Pearson (1896): r = Σ x_π(j)·y_j / √(Σx²·Σy²) on centred x and y (covariate reordered by π)
    for (let s = 0; s < n; s++) {
      const w = this.x[order[s]];
      const off = s * P;
      for (let p = 0; p < P; p++) acc[p] += w * this.y[off + p];
    }
    for (let p = 0; p < P; p++) {
      const r = Math.max(-1, Math.min(1, acc[p] * this.scale[p]));
      this.r[p] = r;
      stat[p] = correlationToT(r, this.df);
      if (df) df[p] = this.df;
    }
  }
}
