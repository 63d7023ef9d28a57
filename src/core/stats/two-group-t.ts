/**
 * Two independent groups: Welch's t (unequal variances, Welch 1947; df by Welch–Satterthwaite,
 * Satterthwaite 1946) or Student's pooled-variance t, group 1 minus group 0 — the same numbers as
 * scipy.stats.ttest_ind(group1, group0, equal_var=False / True).
 *
 * Speed (the permutation loop runs this once per permutation): the data are centred per point on
 * the grand mean (t is shift invariant; centring keeps Σx² − (Σx)²/n free of cancellation) and
 * stored once as interleaved [x, x²] rows. Per relabelling only the sums Σx and Σx² of the SMALLER
 * group are accumulated — the other group's sums are the fixed totals minus these — row by row
 * over that group's members, in blocks of points so the accumulators stay in the L1 cache while
 * each member's row block streams through. No allocation per permutation: buffers are reused.
 */
import type { PointStatistic } from './point-statistic.ts';

const BLOCK_POINTS = 1024;

export type TwoGroupVariance = 'welch' | 'pooled';

export class TwoGroupT implements PointStatistic {
  readonly nPoints: number;
  readonly nSubjects: number;
  readonly scheme = 'relabel' as const;
  readonly df: number;
  private readonly labels: Uint8Array;
  private readonly variance: TwoGroupVariance;
  private readonly xx: Float64Array; // n × 2P: centred x and x² interleaved per point
  private readonly totals: Float64Array; // 2P: Σx and Σx² over all subjects
  private readonly acc: Float64Array; // 2P accumulators for the accumulated group
  private readonly members: Int32Array;

  /** data: subjects × points row-major; labels: 0/1 per subject (each group ≥ 2 subjects). */
  constructor(data: ArrayLike<number>, nSubjects: number, nPoints: number, labels: Uint8Array, variance: TwoGroupVariance) {
    this.nPoints = nPoints;
    this.nSubjects = nSubjects;
    this.labels = labels;
    this.variance = variance;
    this.df = nSubjects - 2;
    const P = nPoints;
    const mean = new Float64Array(P);
    for (let s = 0; s < nSubjects; s++) for (let p = 0; p < P; p++) mean[p] += data[s * P + p];
    for (let p = 0; p < P; p++) mean[p] /= nSubjects;
    this.xx = new Float64Array(nSubjects * 2 * P);
    this.totals = new Float64Array(2 * P);
    for (let s = 0; s < nSubjects; s++) {
      const off = s * 2 * P;
      for (let p = 0; p < P; p++) {
        const x = data[s * P + p] - mean[p];
        this.xx[off + 2 * p] = x;
        this.xx[off + 2 * p + 1] = x * x;
        this.totals[2 * p] += x;
        this.totals[2 * p + 1] += x * x;
      }
    }
    this.acc = new Float64Array(2 * P);
    this.members = new Int32Array(nSubjects);
  }

  observedRelabelling(): Int32Array {
    return Int32Array.from(this.labels);
  }

  compute(relabelling: Int32Array, stat: Float64Array, df?: Float64Array): void {
    const n = this.nSubjects;
    const P = this.nPoints;
    let n1 = 0;
    for (let j = 0; j < n; j++) n1 += relabelling[j];
    const n0 = n - n1;
    // accumulate the smaller group; `accLabel` says which group the accumulators hold
    const accLabel = n1 <= n0 ? 1 : 0;
    let m = 0;
    for (let j = 0; j < n; j++) if (relabelling[j] === accLabel) this.members[m++] = j;
    const nA = accLabel === 1 ? n1 : n0;
    const nB = n - nA;
    const xx = this.xx;
    const acc = this.acc;
    const totals = this.totals;
    const welch = this.variance === 'welch';
    const rowStride = 2 * P;
    for (let b0 = 0; b0 < P; b0 += BLOCK_POINTS) {
      const b1 = Math.min(P, b0 + BLOCK_POINTS);
      const k0 = 2 * b0;
      const k1 = 2 * b1;
      acc.fill(0, k0, k1);
      // group sums: S_A = Σ_{j∈A} x_j, Q_A = Σ_{j∈A} x_j² (blocked accumulation over members)
      for (let i = 0; i < m; i++) {
        const off = this.members[i] * rowStride;
        for (let k = k0; k < k1; k++) acc[k] += xx[off + k];
      }
      for (let p = b0; p < b1; p++) {
        const sA = acc[2 * p];
        const qA = acc[2 * p + 1];
        const sB = totals[2 * p] - sA;
        const qB = totals[2 * p + 1] - qA;
        // sums of squared deviations SS_g = Q_g − S_g²/n_g
        const ssA = Math.max(0, qA - (sA * sA) / nA);
        const ssB = Math.max(0, qB - (sB * sB) / nB);
        const diffAB = sA / nA - sB / nB;
        const diff = accLabel === 1 ? diffAB : -diffAB; // group 1 minus group 0
        if (welch) {
          // Welch (1947): t = (m1 − m0)/√(v1/n1 + v0/n0), v_g = SS_g/(n_g − 1);
          // df = (v1/n1 + v0/n0)² / ((v1/n1)²/(n1 − 1) + (v0/n0)²/(n0 − 1)) (Satterthwaite 1946)
          const a = ssA / (nA - 1) / nA;
          const bb = ssB / (nB - 1) / nB;
          const se2 = a + bb;
          stat[p] = se2 > 0 ? diff / Math.sqrt(se2) : 0;
          if (df) df[p] = se2 > 0 ? (se2 * se2) / ((a * a) / (nA - 1) + (bb * bb) / (nB - 1)) : n - 2;
        } else {
          // Student: t = (m1 − m0)/√(s_p²(1/n1 + 1/n0)), s_p² = (SS1 + SS0)/(n1 + n0 − 2)
          const se2 = ((ssA + ssB) / (n - 2)) * (1 / nA + 1 / nB);
          stat[p] = se2 > 0 ? diff / Math.sqrt(se2) : 0;
          if (df) df[p] = n - 2;
        }
      }
    }
  }
}
