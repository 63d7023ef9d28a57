/**
 * Linear model with nuisance covariates: y = x·β + Z·γ + ε, Z = [1, nuisance columns], and the t
 * of the effect of interest β, permuted by Freedman & Lane (1983) as described by Winkler et al.
 * (2014, NeuroImage 92:381–397, Table 2): residuals of the reduced model e = R_Z·y are permuted,
 * y* = P·e + H_Z·y, and the full model is refitted to y*.
 *
 * The refit is done in closed form (Frisch–Waugh–Lovell): with x_r = R_Z·x and an orthonormal
 * basis Q of Z (modified Gram–Schmidt), x_r'·R_Z·y* = x_r'·P·e and ‖R_Z·y*‖² = ‖e‖² − ‖Q'·P·e‖², so
 *   β* = x_r'Pe / x_r'x_r,  RSS* = ‖e‖² − ‖Q'Pe‖² − (x_r'Pe)²/x_r'x_r,  t* = β* / √(RSS* / (df·x_r'x_r)),
 * df = n − 1 − k (k = number of columns of Z, intercept included). With P = identity this is the
 * ordinary least-squares t of β in the full model.
 */
import type { PointStatistic } from './point-statistic.ts';

export class LinearModelT implements PointStatistic {
  readonly nPoints: number;
  readonly nSubjects: number;
  readonly scheme = 'permute-rows' as const;
  readonly df: number;
  private readonly e: Float64Array; // n × P residuals of the reduced model
  private readonly ee: Float64Array; // ‖e‖² per point
  private readonly q: Float64Array; // k × n orthonormal basis of Z, column after column
  private readonly xr: Float64Array; // x residualised on Z
  private readonly sxx: number;
  private readonly k: number;
  private readonly acc: Float64Array; // (k + 1) × P: x_r'Pe, then Q_c'Pe for each column c
  /** β of the last `compute` call (slope of the effect of interest; for a 0/1 group indicator the adjusted difference group 1 − group 0) */
  readonly beta: Float64Array;

  /**
   * data: subjects × points row-major; effect: the effect of interest per subject; nuisance:
   * columns of nuisance covariates (each of length n); an intercept is always included.
   */
  constructor(data: ArrayLike<number>, nSubjects: number, nPoints: number, effect: ArrayLike<number>, nuisance: ArrayLike<number>[]) {
    const n = nSubjects;
    const P = nPoints;
    this.nPoints = P;
    this.nSubjects = n;
    const columns = [new Float64Array(n).fill(1), ...nuisance.map((c) => Float64Array.from(c))];
    const k = columns.length;
    this.k = k;
    this.df = n - 1 - k;
    if (this.df < 1) throw new RangeError(`linear model: ${n} subjects leave no residual degrees of freedom for ${k - 1} nuisance covariates`);
    this.q = new Float64Array(k * n);
    // modified Gram–Schmidt (Golub & Van Loan, Matrix Computations, §5.2.8)
    for (let c = 0; c < k; c++) {
      const v = columns[c];
      const norm0 = Math.hypot(...v);
      for (let b = 0; b < c; b++) {
        let dot = 0;
        for (let s = 0; s < n; s++) dot += this.q[b * n + s] * v[s];
        for (let s = 0; s < n; s++) v[s] -= dot * this.q[b * n + s];
      }
      const norm = Math.hypot(...v);
      if (!(norm > 1e-10 * Math.max(1, norm0))) throw new RangeError(`linear model: nuisance covariate ${c} is constant or collinear with the others`);
      for (let s = 0; s < n; s++) this.q[c * n + s] = v[s] / norm;
    }
    this.xr = this.residualise(Float64Array.from(effect));
    let sxx = 0;
    for (let s = 0; s < n; s++) sxx += this.xr[s] * this.xr[s];
    let x2 = 0;
    for (let s = 0; s < n; s++) x2 += effect[s] * effect[s];
    if (!(sxx > 1e-20 * Math.max(1, x2))) throw new RangeError('linear model: the effect of interest is collinear with the nuisance covariates');
    this.sxx = sxx;
    this.e = new Float64Array(n * P);
    this.ee = new Float64Array(P);
    const column = new Float64Array(n);
    for (let p = 0; p < P; p++) {
      for (let s = 0; s < n; s++) column[s] = data[s * P + p];
      const r = this.residualise(column);
      for (let s = 0; s < n; s++) {
        this.e[s * P + p] = r[s];
        this.ee[p] += r[s] * r[s];
      }
    }
    this.acc = new Float64Array((k + 1) * P);
    this.beta = new Float64Array(P);
  }

  /** R_Z·v = v − Q·(Q'·v), in place */
  private residualise(v: Float64Array): Float64Array {
    const n = this.nSubjects;
    for (let c = 0; c < this.k; c++) {
      let dot = 0;
      for (let s = 0; s < n; s++) dot += this.q[c * n + s] * v[s];
      for (let s = 0; s < n; s++) v[s] -= dot * this.q[c * n + s];
    }
    return v;
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
    const k = this.k;
    const acc = this.acc;
    acc.fill(0);
    // x_r'Pe and Q_c'Pe: row s of Pe is row π(s) of e
    for (let s = 0; s < n; s++) {
      const off = order[s] * P;
      const w = this.xr[s];
      for (let p = 0; p < P; p++) acc[p] += w * this.e[off + p];
      for (let c = 0; c < k; c++) {
        const qc = this.q[c * n + s];
        const base = (c + 1) * P;
        for (let p = 0; p < P; p++) acc[base + p] += qc * this.e[off + p];
      }
    }
    for (let p = 0; p < P; p++) {
      const a = acc[p];
      let projected = 0;
      for (let c = 0; c < k; c++) projected += acc[(c + 1) * P + p] ** 2;
      const beta = a / this.sxx;
      const rss = Math.max(0, this.ee[p] - projected - (a * a) / this.sxx);
      const se2 = rss / (this.df * this.sxx);
      this.beta[p] = beta;
      stat[p] = se2 > 0 ? beta / Math.sqrt(se2) : 0;
      if (df) df[p] = this.df;
    }
  }
}
