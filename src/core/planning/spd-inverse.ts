/**
 * Inverse of a small symmetric positive-definite matrix through its Cholesky factor A = L·Lᵀ
 * (Golub & Van Loan, Matrix Computations, 4th ed., §4.2): A⁻¹ = L⁻ᵀ·L⁻¹. Returns null when A is
 * not positive definite to working precision (a pivot below 1e-12 of the diagonal's scale) —
 * for normal equations XᵀX, when a column of X is constant or a combination of the others.
 */
export function spdInverse(a: Float64Array, p: number): Float64Array | null {
  if (a.length !== p * p) throw new RangeError(`expected a ${p} × ${p} matrix, got ${a.length} values`);
  let scale = 0;
  for (let i = 0; i < p; i++) scale = Math.max(scale, Math.abs(a[i * p + i]));
  const l = new Float64Array(p * p);
  for (let j = 0; j < p; j++) {
    // l_jj = √(a_jj − Σ_k<j l_jk²); l_ij = (a_ij − Σ_k<j l_ik·l_jk)/l_jj
    let d = a[j * p + j];
    for (let k = 0; k < j; k++) d -= l[j * p + k] * l[j * p + k];
    if (!(d > 1e-12 * scale)) return null;
    const ljj = Math.sqrt(d);
    l[j * p + j] = ljj;
    for (let i = j + 1; i < p; i++) {
      let s = a[i * p + j];
      for (let k = 0; k < j; k++) s -= l[i * p + k] * l[j * p + k];
      l[i * p + j] = s / ljj;
    }
  }
  // M = L⁻¹ by forward substitution, column by column
  const m = new Float64Array(p * p);
  for (let c = 0; c < p; c++) {
    for (let i = c; i < p; i++) {
      let s = i === c ? 1 : 0;
      for (let k = c; k < i; k++) s -= l[i * p + k] * m[k * p + c];
      m[i * p + c] = s / l[i * p + i];
    }
  }
  // A⁻¹ = Mᵀ·M
  const inv = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < p; k++) s += m[k * p + i] * m[k * p + j];
      inv[i * p + j] = s;
      inv[j * p + i] = s;
    }
  }
  return inv;
}
