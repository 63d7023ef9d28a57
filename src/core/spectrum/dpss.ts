/**
 * Discrete prolate spheroidal (Slepian) sequences, the tapers of the multitaper spectrum
 * (Slepian 1978, Bell Syst. Tech. J. 57:1371–1430; Thomson 1982, Proc. IEEE 70:1055–1096).
 *
 * Of all sequences of length N, v_0 concentrates the most energy in the band |f| ≤ W (cycles per
 * sample, W = NW/N); v_k does so among those orthogonal to v_0 … v_{k−1}. Its concentration ratio
 * λ_k is that share; the first K ≈ 2NW − 1 have λ_k near 1. They are the eigenvectors of the
 * symmetric tridiagonal matrix with diagonal ((N − 1 − 2n)/2)²·cos(2πW) and off-diagonal
 * n(N − n)/2 (n = 1 … N−1) (Percival & Walden 1993, "Spectral Analysis for Physical
 * Applications", eq. 378, which commutes with the concentration operator and has the same
 * eigenvectors in the same order), computed by tridiagonal-eigen.ts.
 *
 * Conventions, as scipy.signal.windows.dpss(N, NW, K) gives them: unit energy (Σ v² = 1);
 * symmetric tapers (even k) have a positive sum, antisymmetric ones (odd k) begin with a positive
 * lobe — the first sample with v² above max(1e−7, 1/N) is positive (Percival & Walden 1993,
 * p. 379).
 */
import { largestEigenpairs } from './tridiagonal-eigen.ts';

export interface SlepianTapers {
  /** samples per taper */
  n: number;
  /** time-half-bandwidth product NW */
  nw: number;
  /** unit-energy tapers v_0 … v_{K−1} */
  tapers: Float64Array[];
}

/** The first k Slepian tapers of length n and time-half-bandwidth nw. */
export function slepianTapers(n: number, nw: number, k: number): SlepianTapers {
  if (!Number.isInteger(n) || n < 2) throw new Error(`invalid taper length: ${n} samples`);
  if (!(nw > 0 && nw < n / 2)) throw new Error(`invalid time-half-bandwidth NW: ${nw} (must lie in (0, ${n / 2}) for ${n} samples)`);
  if (!Number.isInteger(k) || k < 1 || k > n) throw new Error(`invalid number of tapers: ${k}`);
  const w = nw / n;
  const d = new Float64Array(n);
  const e = new Float64Array(n - 1);
  const c = Math.cos(2 * Math.PI * w);
  for (let i = 0; i < n; i++) {
    // Percival & Walden 1993, eq. 378: diagonal ((N − 1 − 2n)/2)² cos 2πW, off-diagonal n(N − n)/2
    const h = (n - 1 - 2 * i) / 2;
    d[i] = h * h * c;
    if (i > 0) e[i - 1] = (i * (n - i)) / 2;
  }
  const { vectors } = largestEigenpairs(d, e, k);
  const threshold = Math.max(1e-7, 1 / n);
  vectors.forEach((v, j) => {
    let flip: boolean;
    if (j % 2 === 0) {
      let s = 0;
      for (let i = 0; i < n; i++) s += v[i];
      flip = s < 0; // symmetric: positive sum
    } else {
      let i = 0;
      while (i < n - 1 && v[i] * v[i] <= threshold) i++;
      flip = v[i] < 0; // antisymmetric: positive first lobe
    }
    if (flip) for (let i = 0; i < n; i++) v[i] = -v[i];
  });
  return { n, nw, tapers: vectors };
}

/**
 * Concentration ratios λ_k = Σ_n Σ_m v[n] v[m] sin(2πW(n − m))/(π(n − m)) (the share of the
 * taper's energy in |f| ≤ W), from its autocorrelation r(τ) = Σ_n v[n] v[n + τ]:
 * λ = 2W·r(0) + 2 Σ_{τ≥1} r(τ) sin(2πWτ)/(πτ) (Percival & Walden 1993, p. 390). O(N²) per taper.
 */
export function concentrationRatios(t: SlepianTapers): Float64Array {
  const { n, tapers } = t;
  const w = t.nw / n;
  const out = new Float64Array(tapers.length);
  tapers.forEach((v, k) => {
    let r0 = 0;
    for (let i = 0; i < n; i++) r0 += v[i] * v[i];
    let lambda = 2 * w * r0;
    for (let tau = 1; tau < n; tau++) {
      let r = 0;
      for (let i = 0; i + tau < n; i++) r += v[i] * v[i + tau];
      lambda += (2 * r * Math.sin(2 * Math.PI * w * tau)) / (Math.PI * tau);
    }
    out[k] = lambda;
  });
  return out;
}
