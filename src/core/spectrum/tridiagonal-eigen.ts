/**
 * The largest eigenvalues of a real symmetric tridiagonal matrix and their eigenvectors (pure):
 * bisection on the Sturm sequence count for each eigenvalue, then inverse iteration with a
 * pivoted tridiagonal LU for its vector (Wilkinson 1965, "The Algebraic Eigenvalue Problem",
 * ch. 5 and 9; Golub & Van Loan 2013, "Matrix Computations", §8.4.1 and §8.2.2). It is the
 * method of LAPACK's dstebz + dstein, which scipy's eigh_tridiagonal calls for a selected range.
 *
 * The matrix T has diagonal d[0 … n−1] and off-diagonal e[0 … n−2] (e[i] joins rows i and i+1).
 */

/**
 * Sturm count: the number of eigenvalues of T below x, as the number of negative pivots of the
 * LDLᵀ factorisation of T − xI: q_0 = d_0 − x, q_i = d_i − x − e_{i−1}²/q_{i−1} (Golub & Van
 * Loan §8.4.1). A zero pivot is replaced by −pivmin (as dstebz does), so the count stays defined.
 */
export function sturmCount(d: ArrayLike<number>, e: ArrayLike<number>, x: number, pivmin: number): number {
  let count = 0;
  let q = d[0] - x;
  if (Math.abs(q) < pivmin) q = -pivmin;
  if (q < 0) count++;
  for (let i = 1; i < d.length; i++) {
    q = d[i] - x - (e[i - 1] * e[i - 1]) / q;
    if (Math.abs(q) < pivmin) q = -pivmin;
    if (q < 0) count++;
  }
  return count;
}

/** Gershgorin interval holding every eigenvalue: [min(d_i − |e_{i−1}| − |e_i|), max(d_i + |e_{i−1}| + |e_i|)]. */
function gershgorin(d: ArrayLike<number>, e: ArrayLike<number>): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  const n = d.length;
  for (let i = 0; i < n; i++) {
    const r = (i > 0 ? Math.abs(e[i - 1]) : 0) + (i < n - 1 ? Math.abs(e[i]) : 0);
    lo = Math.min(lo, d[i] - r);
    hi = Math.max(hi, d[i] + r);
  }
  return [lo, hi];
}

/**
 * The j-th smallest eigenvalue (j from 0) by bisection: the interval [lo, hi] keeps
 * count(lo) ≤ j < count(hi) and is halved until it is as narrow as the floating-point numbers
 * around it allow.
 */
function bisect(d: ArrayLike<number>, e: ArrayLike<number>, j: number, bounds: [number, number], pivmin: number): number {
  let [lo, hi] = bounds;
  for (let it = 0; it < 200; it++) {
    const mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break; // no floating-point number lies between them
    if (sturmCount(d, e, mid, pivmin) <= j) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * LU factorisation with partial pivoting of the tridiagonal T − λI, in place (the layout of
 * LAPACK's dgttrf): multipliers in dl, U's diagonal in dd, first and second superdiagonals in
 * du and du2, row interchanges in swapped (1 where rows i and i+1 were exchanged). A pivot that
 * comes out zero is replaced by `tiny`, so the near-singular system of inverse iteration stays
 * solvable (its solution is then dominated by the wanted eigenvector, as intended).
 */
class TridiagonalLu {
  readonly dl: Float64Array;
  readonly dd: Float64Array;
  readonly du: Float64Array;
  readonly du2: Float64Array;
  readonly swapped: Uint8Array;

  constructor(n: number) {
    this.dl = new Float64Array(Math.max(0, n - 1));
    this.dd = new Float64Array(n);
    this.du = new Float64Array(Math.max(0, n - 1));
    this.du2 = new Float64Array(Math.max(0, n - 2));
    this.swapped = new Uint8Array(Math.max(0, n - 1));
  }

  factor(d: ArrayLike<number>, e: ArrayLike<number>, lambda: number, tiny: number): void {
    const { dl, dd, du, du2, swapped } = this;
    const n = dd.length;
    for (let i = 0; i < n; i++) dd[i] = d[i] - lambda;
    for (let i = 0; i < n - 1; i++) {
      dl[i] = e[i];
      du[i] = e[i];
    }
    du2.fill(0);
    swapped.fill(0);
    for (let i = 0; i < n - 1; i++) {
      if (Math.abs(dd[i]) >= Math.abs(dl[i])) {
        // no interchange: eliminate dl[i] with row i
        if (dd[i] === 0) dd[i] = tiny;
        const fact = dl[i] / dd[i];
        dl[i] = fact;
        dd[i + 1] -= fact * du[i];
      } else {
        // interchange rows i and i+1, then eliminate
        const fact = dd[i] / dl[i];
        dd[i] = dl[i];
        dl[i] = fact;
        const temp = du[i];
        du[i] = dd[i + 1];
        dd[i + 1] = temp - fact * dd[i + 1];
        if (i < n - 2) {
          du2[i] = du[i + 1];
          du[i + 1] = -fact * du[i + 1];
        }
        swapped[i] = 1;
      }
    }
    if (dd[n - 1] === 0) dd[n - 1] = tiny;
  }

  /** Solves (T − λI) x = b in place (b becomes x), with the factors of factor(). */
  solve(b: Float64Array): void {
    const { dl, dd, du, du2, swapped } = this;
    const n = dd.length;
    for (let i = 0; i < n - 1; i++) {
      if (swapped[i] === 0) b[i + 1] -= dl[i] * b[i];
      else {
        const temp = b[i];
        b[i] = b[i + 1];
        b[i + 1] = temp - dl[i] * b[i];
      }
    }
    b[n - 1] /= dd[n - 1];
    if (n > 1) b[n - 2] = (b[n - 2] - du[n - 2] * b[n - 1]) / dd[n - 2];
    for (let i = n - 3; i >= 0; i--) b[i] = (b[i] - du[i] * b[i + 1] - du2[i] * b[i + 2]) / dd[i];
  }
}

export interface TridiagonalEigen {
  /** the largest eigenvalues, largest first */
  values: Float64Array;
  /** the matching unit-norm eigenvectors (sign as inverse iteration leaves it) */
  vectors: Float64Array[];
}

/**
 * The `count` largest eigenvalues of T (largest first) and their unit-norm eigenvectors.
 * Each eigenvalue is bisected to full precision; its vector comes from three steps of inverse
 * iteration from a fixed start vector with both symmetric and antisymmetric parts, each step
 * orthogonalised against the vectors already found (Gram–Schmidt) and normalised.
 */
export function largestEigenpairs(d: ArrayLike<number>, e: ArrayLike<number>, count: number): TridiagonalEigen {
  const n = d.length;
  if (!Number.isInteger(n) || n < 1) throw new Error(`invalid tridiagonal matrix size: ${n}`);
  if (e.length !== n - 1) throw new Error(`off-diagonal of a ${n}×${n} tridiagonal matrix needs ${n - 1} values, got ${e.length}`);
  if (!Number.isInteger(count) || count < 1 || count > n) throw new Error(`invalid number of eigenpairs: ${count} (matrix size ${n})`);
  const bounds = gershgorin(d, e);
  let norm = Math.max(Math.abs(bounds[0]), Math.abs(bounds[1]));
  if (norm === 0) norm = 1;
  let maxE2 = 0;
  for (let i = 0; i < n - 1; i++) maxE2 = Math.max(maxE2, e[i] * e[i]);
  const pivmin = Number.MIN_VALUE * 1e10 * Math.max(1, maxE2);
  const tiny = Number.EPSILON * norm;
  const values = new Float64Array(count);
  const vectors: Float64Array[] = [];
  const lu = new TridiagonalLu(n);
  for (let k = 0; k < count; k++) {
    const lambda = bisect(d, e, n - 1 - k, bounds, pivmin);
    values[k] = lambda;
    lu.factor(d, e, lambda, tiny);
    const v = new Float64Array(n);
    // start: a vector with no symmetry, so it is not orthogonal to any eigenvector of a persymmetric matrix
    for (let i = 0; i < n; i++) v[i] = 1 + (i + 1) / n;
    for (let step = 0; step < 3; step++) {
      lu.solve(v);
      for (const u of vectors) {
        let dot = 0;
        for (let i = 0; i < n; i++) dot += u[i] * v[i];
        for (let i = 0; i < n; i++) v[i] -= dot * u[i];
      }
      let s = 0;
      for (let i = 0; i < n; i++) s += v[i] * v[i];
      const inv = 1 / Math.sqrt(s);
      for (let i = 0; i < n; i++) v[i] *= inv;
    }
    vectors.push(v);
  }
  return { values, vectors };
}
