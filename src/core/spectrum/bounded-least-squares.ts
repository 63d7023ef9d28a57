/**
 * Box-bounded nonlinear least squares, min Σ (y_i − m_i(p))² subject to lower ≤ p ≤ upper, by the
 * Levenberg–Marquardt method (Levenberg 1944; Marquardt 1963, J. SIAM 11:431–441) with Marquardt's
 * diagonal scaling (JᵀJ + λ·diag(JᵀJ))·δ = Jᵀr, steps accepted only when they lower the sum of
 * squares, and bounds kept by projection: a parameter on a bound whose gradient points outward is
 * held for that step (active set), the trial point is clipped to the box (projected LM; e.g.
 * Kanzow, Yamashita & Fukushima 2004, J. Comput. Appl. Math. 172:375–397).
 *
 * Written for the spectral model's joint fit (joint-fit.ts) because ml-levenberg-marquardt 5.1.0,
 * which we tried first, accepts every step (also uphill ones) and clips it at the bounds; with
 * peak widths on their lower bound it stalled above scipy.optimize.curve_fit's minimum (measured:
 * 2 of 8 noisy spectra, e.g. RMSE 0.078617 vs 0.078379, not reached in 50 iterations with any
 * damping tried), and with no relative stopping rule it runs a fixed count of iterations at about
 * 0.14 ms each (7 parameters, 157 bins; measured on a loaded machine).
 * All work arrays are allocated once per call; iterations allocate nothing.
 */
export interface BoundedLeastSquaresProblem {
  /** Observations y (length n). */
  y: Float64Array;
  start: Float64Array;
  lower: Float64Array;
  upper: Float64Array;
  /** Writes the model at p into out (length n). */
  model(p: Float64Array, out: Float64Array): void;
  /** Writes ∂m_i/∂p_q at p into jac, column by column: jac[q·n + i]. */
  jacobian(p: Float64Array, jac: Float64Array): void;
}

export interface BoundedLeastSquaresResult {
  params: Float64Array;
  /** Sum of squared residuals at params. */
  sse: number;
  iterations: number;
  /** True when the relative decrease or the step fell below tolerance (not the iteration cap). */
  converged: boolean;
}

const MAX_ITERATIONS = 200;
/** Stop when an accepted step lowers the SSE by less than this fraction… */
const SSE_TOLERANCE = 1e-12;
/** …or moves no parameter by more than this × (|p| + this). */
const STEP_TOLERANCE = 1e-10;

export function boundedLeastSquares(problem: BoundedLeastSquaresProblem): BoundedLeastSquaresResult {
  const { y, lower, upper } = problem;
  const n = y.length;
  const m = problem.start.length;
  const p = new Float64Array(m);
  for (let q = 0; q < m; q++) p[q] = Math.min(upper[q], Math.max(lower[q], problem.start[q]));
  const fitted = new Float64Array(n);
  const residual = new Float64Array(n);
  const jac = new Float64Array(n * m);
  const jtj = new Float64Array(m * m);
  const grad = new Float64Array(m);
  const free = new Int32Array(m);
  const system = new Float64Array(m * m);
  const rhs = new Float64Array(m);
  const step = new Float64Array(m);
  const trial = new Float64Array(m);

  problem.model(p, fitted);
  let sse = 0;
  for (let i = 0; i < n; i++) {
    residual[i] = y[i] - fitted[i];
    sse += residual[i] * residual[i];
  }
  let lambda = 1e-3;
  let iterations = 0;
  let converged = false;
  while (iterations < MAX_ITERATIONS && !converged) {
    iterations++;
    problem.jacobian(p, jac);
    normalEquations(jac, residual, n, m, jtj, grad);
    // active set: a parameter on a bound with the descent direction (+Jᵀr) pointing out is held
    let nFree = 0;
    let maxDiag = 0;
    for (let q = 0; q < m; q++) {
      const held = (p[q] <= lower[q] && grad[q] < 0) || (p[q] >= upper[q] && grad[q] > 0);
      if (!held) free[nFree++] = q;
      maxDiag = Math.max(maxDiag, jtj[q * m + q]);
    }
    if (nFree === 0 || maxDiag === 0) {
      converged = true;
      break;
    }
    let accepted = false;
    while (!accepted) {
      // (JᵀJ + λ·diag(JᵀJ))·δ = Jᵀr over the free parameters; a floor on the diagonal keeps it definite
      for (let a = 0; a < nFree; a++) {
        const qa = free[a];
        for (let b = 0; b < nFree; b++) system[a * nFree + b] = jtj[qa * m + free[b]];
        system[a * nFree + a] += lambda * Math.max(jtj[qa * m + qa], 1e-12 * maxDiag);
        rhs[a] = grad[qa];
      }
      const solved = choleskySolve(system, rhs, nFree);
      trial.set(p);
      let moved = 0;
      if (solved) {
        for (let a = 0; a < nFree; a++) {
          const q = free[a];
          trial[q] = Math.min(upper[q], Math.max(lower[q], p[q] + rhs[a]));
        }
        for (let q = 0; q < m; q++) {
          step[q] = trial[q] - p[q];
          moved = Math.max(moved, Math.abs(step[q]) / (Math.abs(p[q]) + STEP_TOLERANCE));
        }
      }
      if (solved && moved <= STEP_TOLERANCE) {
        converged = true;
        break;
      }
      let sseTrial = Infinity;
      if (solved) {
        problem.model(trial, fitted);
        sseTrial = 0;
        for (let i = 0; i < n; i++) {
          const r = y[i] - fitted[i];
          sseTrial += r * r;
        }
      }
      if (sseTrial < sse) {
        accepted = true;
        const decrease = (sse - sseTrial) / sse;
        p.set(trial);
        sse = sseTrial;
        for (let i = 0; i < n; i++) residual[i] = y[i] - fitted[i];
        lambda = Math.max(lambda / 10, 1e-12);
        if (decrease < SSE_TOLERANCE) converged = true;
      } else {
        lambda *= 10;
        if (lambda > 1e12) {
          converged = true; // no downhill step left at any damping: a (constrained) minimum
          break;
        }
      }
    }
  }
  return { params: p, sse, iterations, converged };
}

/**
 * JᵀJ (m × m, row-major, upper triangle mirrored) and Jᵀr of the n × m Jacobian stored column by
 * column (jac[q·n + i]): each entry a dot product over the bins i in ascending order, two to four
 * entries per pass over a column so its values are read once for each.
 */
function normalEquations(jac: Float64Array, r: Float64Array, n: number, m: number, jtj: Float64Array, grad: Float64Array): void {
  for (let a = 0; a < m; a++) {
    const ca = a * n;
    let g = 0;
    for (let i = 0; i < n; i++) g += jac[ca + i] * r[i];
    grad[a] = g;
    let b = a;
    for (; b + 3 < m; b += 4) {
      const c0 = b * n;
      const c1 = c0 + n;
      const c2 = c1 + n;
      const c3 = c2 + n;
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      let s3 = 0;
      for (let i = 0; i < n; i++) {
        const ja = jac[ca + i];
        s0 += ja * jac[c0 + i];
        s1 += ja * jac[c1 + i];
        s2 += ja * jac[c2 + i];
        s3 += ja * jac[c3 + i];
      }
      jtj[a * m + b] = jtj[b * m + a] = s0;
      jtj[a * m + b + 1] = jtj[(b + 1) * m + a] = s1;
      jtj[a * m + b + 2] = jtj[(b + 2) * m + a] = s2;
      jtj[a * m + b + 3] = jtj[(b + 3) * m + a] = s3;
    }
    for (; b < m; b++) {
      const cb = b * n;
      let s = 0;
      for (let i = 0; i < n; i++) s += jac[ca + i] * jac[cb + i];
      jtj[a * m + b] = jtj[b * m + a] = s;
    }
  }
}

/**
 * Solves A·x = b in place (b ← x) for a symmetric positive definite A (k × k, row-major, A is
 * overwritten by its Cholesky factor L, A = L·Lᵀ; Golub & Van Loan, Matrix Computations, §4.2).
 * Returns false if A is not numerically positive definite.
 */
function choleskySolve(a: Float64Array, b: Float64Array, k: number): boolean {
  for (let j = 0; j < k; j++) {
    let d = a[j * k + j];
    for (let s = 0; s < j; s++) d -= a[j * k + s] * a[j * k + s];
    if (!(d > 0)) return false;
    const l = Math.sqrt(d);
    a[j * k + j] = l;
    for (let i = j + 1; i < k; i++) {
      let v = a[i * k + j];
      for (let s = 0; s < j; s++) v -= a[i * k + s] * a[j * k + s];
      a[i * k + j] = v / l;
    }
  }
  for (let i = 0; i < k; i++) {
    let v = b[i];
    for (let s = 0; s < i; s++) v -= a[i * k + s] * b[s];
    b[i] = v / a[i * k + i];
  }
  for (let i = k - 1; i >= 0; i--) {
    let v = b[i];
    for (let s = i + 1; s < k; s++) v -= a[s * k + i] * b[s];
    b[i] = v / a[i * k + i];
  }
  return true;
}
