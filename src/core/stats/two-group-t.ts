/**
 * Two independent groups: Welch's t (unequal variances, Welch 1947; df by Welch–Satterthwaite,
 * Satterthwaite 1946) or Student's pooled-variance t, group 1 minus group 0 — the same numbers as
 * scipy.stats.ttest_ind(group1, group0, equal_var=False / True).
 *
 * Speed (the permutation loop runs this for every permutation). For a relabelling, t at every
 * point follows from S_A = Σx and Q_A = Σx² over ONE group A (the other group's are the fixed
 * totals minus these), and mostly from S_A alone:
 * - between/within decomposition: SS_within = SS_total − (n_A·n_B/n)·(m_A − m_B)², SS_total fixed,
 *   so Student's t needs only S_A; with equal group sizes Welch's t equals Student's t (both
 *   standard errors are SS_within/(m(m − 1))); with unequal sizes, SS_A + SS_B = SS_within bounds
 *   Welch's standard error from below, se² ≥ SS_within/max(n_A(n_A − 1), n_B(n_B − 1)), and
 *   Q_A is summed only at the points whose bound on |t| passes the cluster threshold
 *   (computeNull with a threshold; the exact `compute` always sums Q_A);
 * - subset-sum tables (the "four Russians" idea of Arlazarov et al. 1970, on 0/1 labels): the
 *   data are centred once per point (t is shift invariant; centring keeps Q − S²/n free of
 *   cancellation), subjects are cut into chunks of g (g ≤ 6, as large as a memory budget allows),
 *   and Σx and Σx² of each of the 2^g subsets of every chunk are tabulated per point once; a
 *   relabelling's group-A members form one g-bit pattern per chunk, so S_A is the sum of ⌈n/g⌉
 *   table rows instead of one row per member (20 instead of 50 for 100 subjects, g = 5);
 * - points in blocks so the accumulators stay in the L1 cache; four table rows are added per pass
 *   over the accumulators (fewer accumulator loads and stores); contiguous row segments; every
 *   buffer allocated once and reused.
 */
import type { PointStatistic } from './point-statistic.ts';

/** largest pair of subset-sum tables, bytes (float64 Σx and Σx² per point per subset). At
 * g = 1 (cohort size) no table is built at all: the rows summed are the caller's data as given
 * (read only, never copied: at 2,000 subjects × 7,616 points 244 MB less than a centred Σx and
 * Σx² table, and threads sharing the data share it whole), the squares formed where they are
 * summed, and the sums centred afterwards, S = Σx − n_A·m and Q = Σx² − 2m·Σx + n_A·m² (m the
 * point's mean). That moves the rounding of the raw sums into the result: a relative error of
 * about √n_A·ε·|m|/sd in S and ε·(m/sd)² in Q, below 1e-12 while |m|/sd < 1e3 (log10 spectra
 * are near 10); tests/stats/two-group-t-large.test.ts checks it against scipy. */
const TABLE_BUDGET_BYTES = 160 * 1024 * 1024;
const MAX_CHUNK = 6;
const BLOCK_POINTS = 2048;

export type TwoGroupVariance = 'welch' | 'pooled';

export class TwoGroupT implements PointStatistic {
  readonly nPoints: number;
  readonly nSubjects: number;
  readonly scheme = 'relabel' as const;
  readonly df: number;
  /** subjects per chunk of the subset-sum tables */
  readonly chunk: number;
  private readonly labels: Uint8Array;
  private readonly variance: TwoGroupVariance;
  private readonly nChunks: number;
  /** rows [chunk·(2^g − 1) + pattern − 1] of P: Σx, and Σx², of the pattern's subjects, centred;
   * at g = 1 the data themselves (one row per subject, not centred) and no Σx² table */
  private readonly sumTable: Float64Array;
  private readonly sqTable: Float64Array | null;
  /** per point mean over all subjects (the centring of the g = 1 sums) */
  private readonly mean: Float64Array;
  private readonly total: Float64Array; // Σx per point over all subjects
  private readonly totalSq: Float64Array; // Σx² per point
  private readonly ssTotal: Float64Array; // Σx² − (Σx)²/n per point
  private readonly accSum: Float64Array;
  private readonly accSq: Float64Array;
  private readonly rows: Int32Array; // table row offsets of one relabelling
  private nRows = 0;
  private nA = 0;
  private flip = 1;

  /** data: subjects × points row-major; labels: 0/1 per subject (each group ≥ 2 subjects). */
  constructor(data: Float64Array | Float32Array, nSubjects: number, nPoints: number, labels: Uint8Array, variance: TwoGroupVariance) {
    const n = nSubjects;
    const P = nPoints;
    this.nPoints = P;
    this.nSubjects = n;
    this.labels = labels;
    this.variance = variance;
    this.df = n - 2;
    let g = MAX_CHUNK;
    while (g > 1 && Math.ceil(n / g) * (2 ** g - 1) * 2 * P * 8 > TABLE_BUDGET_BYTES) g--;
    this.chunk = g;
    this.nChunks = Math.ceil(n / g);
    const mean = new Float64Array(P);
    for (let s = 0; s < n; s++) for (let p = 0; p < P; p++) mean[p] += data[s * P + p];
    for (let p = 0; p < P; p++) mean[p] /= n;
    this.mean = mean;
    this.total = new Float64Array(P);
    this.totalSq = new Float64Array(P);
    for (let s = 0; s < n; s++) {
      for (let p = 0; p < P; p++) {
        const v = data[s * P + p] - mean[p];
        this.total[p] += v;
        this.totalSq[p] += v * v;
      }
    }
    this.ssTotal = Float64Array.from(this.totalSq, (q, p) => q - (this.total[p] * this.total[p]) / n);
    // subset sums, one row per non-empty pattern u (row c·(2^g − 1) + u − 1):
    // row(u) = row(u without its lowest bit) + x_j (x_j²) of that bit's subject j
    const rowsPerChunk = 2 ** g - 1;
    const size = this.nChunks * rowsPerChunk * P;
    // g = 1: the data as given, uncentred (a float32 matrix in a float64 copy); no Σx² table
    const asGiven = () => (data instanceof Float64Array ? data.subarray(0, n * P) : Float64Array.from(data.subarray(0, n * P)));
    this.sumTable = g === 1 ? asGiven() : new Float64Array(size);
    const sq = g === 1 ? null : new Float64Array(size);
    this.sqTable = sq;
    for (let c = 0; g > 1 && c < this.nChunks; c++) {
      for (let u = 1; u <= rowsPerChunk; u++) {
        const low = u & -u;
        const j = c * g + Math.log2(low);
        if (j >= n) continue; // bits beyond the last subject are never set
        const dst = (c * rowsPerChunk + u - 1) * P;
        const rest = u ^ low;
        const src = (c * rowsPerChunk + rest - 1) * P;
        for (let p = 0; p < P; p++) {
          const v = data[j * P + p] - mean[p];
          this.sumTable[dst + p] = (rest === 0 ? 0 : this.sumTable[src + p]) + v;
          if (sq) sq[dst + p] = (rest === 0 ? 0 : sq[src + p]) + v * v;
        }
      }
    }
    this.accSum = new Float64Array(Math.min(P, BLOCK_POINTS));
    this.accSq = new Float64Array(Math.min(P, BLOCK_POINTS));
    this.rows = new Int32Array(this.nChunks);
  }

  observedRelabelling(): Int32Array {
    return Int32Array.from(this.labels);
  }

  /** group A = the smaller group; its g-bit pattern per chunk → table rows */
  private selectRows(relabelling: Int32Array): void {
    const n = this.nSubjects;
    const g = this.chunk;
    const rowsPerChunk = 2 ** g - 1;
    let n1 = 0;
    for (let j = 0; j < n; j++) n1 += relabelling[j];
    const accLabel = n1 <= n - n1 ? 1 : 0;
    this.nA = accLabel === 1 ? n1 : n - n1;
    this.flip = accLabel === 1 ? 1 : -1; // report group 1 minus group 0
    this.nRows = 0;
    for (let c = 0; c < this.nChunks; c++) {
      let u = 0;
      for (let b = 0; b < g && c * g + b < n; b++) if (relabelling[c * g + b] === accLabel) u |= 1 << b;
      if (u !== 0) this.rows[this.nRows++] = (c * rowsPerChunk + u - 1) * this.nPoints;
    }
  }

  /** acc[k] = Σ over the selected rows of table[row + b0 + k], k < len; four rows per pass over acc */
  private sumRows(table: Float64Array, acc: Float64Array, b0: number, len: number): void {
    acc.fill(0, 0, len);
    const rows = this.rows;
    let r = 0;
    for (; r + 4 <= this.nRows; r += 4) {
      const o1 = rows[r] + b0;
      const o2 = rows[r + 1] + b0;
      const o3 = rows[r + 2] + b0;
      const o4 = rows[r + 3] + b0;
      for (let k = 0; k < len; k++) acc[k] += table[o1 + k] + table[o2 + k] + (table[o3 + k] + table[o4 + k]);
    }
    for (; r < this.nRows; r++) {
      const off = rows[r] + b0;
      for (let k = 0; k < len; k++) acc[k] += table[off + k];
    }
  }

  /** sumRows of the squares of `table` (g = 1: Σx² from the centred data), the same additions in the same order */
  private sumSquaredRows(table: Float64Array, acc: Float64Array, b0: number, len: number): void {
    acc.fill(0, 0, len);
    const rows = this.rows;
    let r = 0;
    for (; r + 4 <= this.nRows; r += 4) {
      const o1 = rows[r] + b0;
      const o2 = rows[r + 1] + b0;
      const o3 = rows[r + 2] + b0;
      const o4 = rows[r + 3] + b0;
      for (let k = 0; k < len; k++) {
        const v1 = table[o1 + k];
        const v2 = table[o2 + k];
        const v3 = table[o3 + k];
        const v4 = table[o4 + k];
        acc[k] += v1 * v1 + v2 * v2 + (v3 * v3 + v4 * v4);
      }
    }
    for (; r < this.nRows; r++) {
      const off = rows[r] + b0;
      for (let k = 0; k < len; k++) acc[k] += table[off + k] * table[off + k];
    }
  }

  /**
   * g = 1: the raw sums of block [b0, b0 + len) centred on the point means, S = Σx − n_A·m and,
   * with squares, Q = Σx² − 2m·Σx + n_A·m² (Q first: it needs the raw S).
   */
  private centreRawSums(b0: number, len: number, squares: boolean): void {
    const nA = this.nA;
    for (let k = 0; k < len; k++) {
      const m = this.mean[b0 + k];
      const s = this.accSum[k];
      if (squares) this.accSq[k] = this.accSq[k] - 2 * m * s + nA * m * m;
      this.accSum[k] = s - nA * m;
    }
  }

  compute(relabelling: Int32Array, stat: Float64Array, df?: Float64Array): void {
    this.selectRows(relabelling);
    const n = this.nSubjects;
    const P = this.nPoints;
    const nA = this.nA;
    const nB = n - nA;
    const invA = 1 / nA;
    const invB = 1 / nB;
    const welch = this.variance === 'welch';
    for (let b0 = 0; b0 < P; b0 += BLOCK_POINTS) {
      const len = Math.min(P, b0 + BLOCK_POINTS) - b0;
      this.sumRows(this.sumTable, this.accSum, b0, len);
      if (this.sqTable) this.sumRows(this.sqTable, this.accSq, b0, len);
      else {
        this.sumSquaredRows(this.sumTable, this.accSq, b0, len);
        this.centreRawSums(b0, len, true);
      }
      for (let k = 0; k < len; k++) {
        const p = b0 + k;
        const sA = this.accSum[k];
        const qA = this.accSq[k];
        const sB = this.total[p] - sA;
        // sums of squared deviations SS_g = Q_g − S_g²/n_g
        const ssA = Math.max(0, qA - sA * sA * invA);
        const ssB = Math.max(0, this.totalSq[p] - qA - sB * sB * invB);
        const diff = this.flip * (sA * invA - sB * invB);
        if (welch) {
          // Welch (1947): t = (m1 − m0)/√(v1/n1 + v0/n0), v_g = SS_g/(n_g − 1);
          // df = (v1/n1 + v0/n0)² / ((v1/n1)²/(n1 − 1) + (v0/n0)²/(n0 − 1)) (Satterthwaite 1946)
          const a = (ssA * invA) / (nA - 1);
          const b = (ssB * invB) / (nB - 1);
          const se2 = a + b;
          stat[p] = se2 > 0 ? diff / Math.sqrt(se2) : 0;
          if (df) df[p] = se2 > 0 ? (se2 * se2) / ((a * a) / (nA - 1) + (b * b) / (nB - 1)) : n - 2;
        } else {
          // Student: t = (m1 − m0)/√(s_p²(1/n1 + 1/n0)), s_p² = (SS1 + SS0)/(n1 + n0 − 2)
          const se2 = ((ssA + ssB) / (n - 2)) * (invA + invB);
          stat[p] = se2 > 0 ? diff / Math.sqrt(se2) : 0;
          if (df) df[p] = n - 2;
        }
      }
    }
  }

  computeNull(relabelling: Int32Array, stat: Float64Array, threshold: number | null): void {
    if (threshold === null) {
      this.compute(relabelling, stat);
      return;
    }
    this.selectRows(relabelling);
    const n = this.nSubjects;
    const P = this.nPoints;
    const nA = this.nA;
    const nB = n - nA;
    const invA = 1 / nA;
    const invB = 1 / nB;
    const between = (nA * nB) / n;
    // Student's t, and Welch's t for equal groups, from S_A alone
    const fromSums = this.variance === 'pooled' || nA === nB;
    const pooledScale = (invA + invB) / (n - 2);
    const minScale = 1 / Math.max(nA * (nA - 1), nB * (nB - 1));
    for (let b0 = 0; b0 < P; b0 += BLOCK_POINTS) {
      const len = Math.min(P, b0 + BLOCK_POINTS) - b0;
      this.sumRows(this.sumTable, this.accSum, b0, len);
      // g = 1: raw Σx kept beside the centred one, for the Σx² of points that pass the bound below
      if (this.sqTable === null) {
        if (!fromSums) this.accSq.set(this.accSum.subarray(0, len));
        this.centreRawSums(b0, len, false);
      }
      for (let k = 0; k < len; k++) {
        const p = b0 + k;
        const sA = this.accSum[k];
        const d = sA * invA - (this.total[p] - sA) * invB;
        // SS_within = SS_total − (n_A·n_B/n)·(m_A − m_B)²
        const within = Math.max(0, this.ssTotal[p] - between * d * d);
        if (fromSums) {
          const se2 = within * pooledScale;
          stat[p] = se2 > 0 ? (this.flip * d) / Math.sqrt(se2) : 0;
          continue;
        }
        // Welch, unequal groups: |t| ≤ |d|/√(SS_within·minScale); exact t only where that passes
        const bound = within > 0 ? Math.abs(d) / Math.sqrt(within * minScale) : 0;
        if (bound <= threshold) {
          stat[p] = 0;
          continue;
        }
        let qA = 0;
        const sq = this.sqTable;
        if (sq) for (let r = 0; r < this.nRows; r++) qA += sq[this.rows[r] + p];
        else {
          for (let r = 0; r < this.nRows; r++) {
            const v = this.sumTable[this.rows[r] + p];
            qA += v * v;
          }
          // Σ(x − m)² = Σx² − 2m·Σx + n_A·m² (raw Σx in accSq)
          const m = this.mean[p];
          qA = qA - 2 * m * this.accSq[k] + nA * m * m;
        }
        const ssA = Math.max(0, qA - sA * sA * invA);
        const sB = this.total[p] - sA;
        const ssB = Math.max(0, this.totalSq[p] - qA - sB * sB * invB);
        const se2 = (ssA * invA) / (nA - 1) + (ssB * invB) / (nB - 1);
        stat[p] = se2 > 0 ? (this.flip * d) / Math.sqrt(se2) : 0;
      }
    }
  }
}
