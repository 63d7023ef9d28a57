/**
 * Hedges' g per point with missing values (NaN skipped, n counted per point): the formulas of
 * effect-size.ts (Hedges & Olkin 1985, large-sample interval) with each point's own group sizes.
 * Used only when the data hold a NaN; complete data take effect-size.ts unchanged.
 */
import { emptyEffect, zCrit, type EffectSize } from './effect-size.ts';

/** Hedges' g of group 1 minus group 0 per point over the values present; labels 0/1 per subject. */
export function hedgesGTwoGroupsMissing(data: ArrayLike<number>, nSubjects: number, nPoints: number, labels: Uint8Array, level: number): EffectSize {
  const P = nPoints;
  const sum = [new Float64Array(P), new Float64Array(P)];
  const count = [new Float64Array(P), new Float64Array(P)];
  for (let s = 0; s < nSubjects; s++) {
    const g = labels[s];
    for (let p = 0; p < P; p++) {
      const x = data[s * P + p];
      if (Number.isNaN(x)) continue;
      sum[g][p] += x;
      count[g][p]++;
    }
  }
  const ss = new Float64Array(P);
  for (let s = 0; s < nSubjects; s++) {
    const g = labels[s];
    for (let p = 0; p < P; p++) {
      const x = data[s * P + p];
      if (!Number.isNaN(x)) ss[p] += (x - sum[g][p] / count[g][p]) ** 2;
    }
  }
  const z = zCrit(level);
  const out = emptyEffect('hedges-g', P, level);
  for (let p = 0; p < P; p++) {
    const n0 = count[0][p];
    const n1 = count[1][p];
    const n = n0 + n1;
    // g = J·(m1 − m0)/s_p, J = 1 − 3/(4n − 9), var(g) ≈ n/(n1·n0) + g²/(2n), with this point's n0, n1
    const J = 1 - 3 / (4 * n - 9);
    const diff = sum[1][p] / n1 - sum[0][p] / n0;
    const sp = Math.sqrt(ss[p] / (n - 2));
    const g = sp > 0 ? (J * diff) / sp : 0;
    const se = Math.sqrt(n / (n1 * n0) + (g * g) / (2 * n));
    out.difference![p] = diff;
    out.value[p] = g;
    out.ciLow[p] = g - z * se;
    out.ciHigh[p] = g + z * se;
  }
  return out;
}

/** Hedges' g of one sample (or paired differences) against zero per point over the values present. */
export function hedgesGOneSampleMissing(d: ArrayLike<number>, nSubjects: number, nPoints: number, level: number): EffectSize {
  const P = nPoints;
  const count = new Float64Array(P);
  const mean = new Float64Array(P);
  for (let s = 0; s < nSubjects; s++) {
    for (let p = 0; p < P; p++) {
      const x = d[s * P + p];
      if (Number.isNaN(x)) continue;
      mean[p] += x;
      count[p]++;
    }
  }
  for (let p = 0; p < P; p++) mean[p] /= count[p];
  const ss = new Float64Array(P);
  for (let s = 0; s < nSubjects; s++) {
    for (let p = 0; p < P; p++) {
      const x = d[s * P + p];
      if (!Number.isNaN(x)) ss[p] += (x - mean[p]) ** 2;
    }
  }
  const z = zCrit(level);
  const out = emptyEffect('hedges-g', P, level);
  for (let p = 0; p < P; p++) {
    const n = count[p];
    // g = J·mean/sd, J = 1 − 3/(4(n − 1) − 1), var(g) ≈ 1/n + g²/(2n), with this point's n
    const J = 1 - 3 / (4 * (n - 1) - 1);
    const sd = Math.sqrt(ss[p] / (n - 1));
    const g = sd > 0 ? (J * mean[p]) / sd : 0;
    const se = Math.sqrt(1 / n + (g * g) / (2 * n));
    out.difference![p] = mean[p];
    out.value[p] = g;
    out.ciLow[p] = g - z * se;
    out.ciHigh[p] = g + z * se;
  }
  return out;
}
