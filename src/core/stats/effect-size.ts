/**
 * Effect sizes per point with confidence intervals (large-sample normal approximations).
 * - Two groups: Hedges' g = J·(m1 − m0)/s_p, s_p² = (SS1 + SS0)/(n1 + n0 − 2), small-sample
 *   correction J = 1 − 3/(4(n1 + n0) − 9); variance var(g) ≈ (n1 + n0)/(n1·n0) + g²/(2(n1 + n0))
 *   (Hedges & Olkin 1985, Statistical Methods for Meta-Analysis, ch. 5, large-sample variance).
 * - Paired / one-sample: g = J·mean(d)/sd(d) with J = 1 − 3/(4(n − 1) − 1) and
 *   var(g) ≈ 1/n + g²/(2n) (the one-sample analogue of the same approximation; common practice).
 * - Correlation (and the partial correlation of a linear model, r = t/√(t² + df)): Fisher z
 *   interval tanh(atanh(r) ± z_{1−α/2}/√(n − 3 − k)), k nuisance covariates (Fisher 1921).
 * Interval: estimate ± z_{1−α/2}·√var with z from the normal quantile.
 * Missing values (NaN) are skipped: each point uses its own group sizes (complete data give every
 * point the same n).
 */
import { fisherZ, fisherZInverse, normalQuantile } from './distributions.ts';

export interface EffectSize {
  kind: 'hedges-g' | 'r' | 'partial-r';
  value: Float64Array;
  ciLow: Float64Array;
  ciHigh: Float64Array;
  /** confidence level of the interval, e.g. 0.95 */
  level: number;
  /** raw effect: mean difference group 1 − group 0 (paired: second − first; one-sample: the
   * mean), or for a linear model the coefficient of the effect of interest; null for r */
  difference: Float64Array | null;
}

export function zCrit(level: number): number {
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must lie in (0, 1), got ${level}`);
  return normalQuantile(1 - (1 - level) / 2);
}

/** Hedges' g of group 1 minus group 0 per point over the values present; labels 0/1 per subject. */
export function hedgesGTwoGroups(data: ArrayLike<number>, nSubjects: number, nPoints: number, labels: Uint8Array, level: number): EffectSize {
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
export function hedgesGOneSample(d: ArrayLike<number>, nSubjects: number, nPoints: number, level: number): EffectSize {
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

/** Correlation effect with Fisher-z interval; r per point, nuisance = number of nuisance covariates. */
export function correlationEffect(
  kind: 'r' | 'partial-r',
  r: ArrayLike<number>,
  slope: Float64Array | null,
  nSubjects: number,
  nuisance: number,
  level: number,
): EffectSize {
  const P = r.length;
  const z = zCrit(level);
  const se = 1 / Math.sqrt(nSubjects - 3 - nuisance);
  const out: EffectSize = { ...emptyEffect(kind, P, level), difference: slope };
  for (let p = 0; p < P; p++) {
    const zr = fisherZ(r[p]);
    out.value[p] = r[p];
    out.ciLow[p] = fisherZInverse(zr - z * se);
    out.ciHigh[p] = fisherZInverse(zr + z * se);
  }
  return out;
}

export function emptyEffect(kind: EffectSize['kind'], P: number, level: number): EffectSize {
  return { kind, value: new Float64Array(P), ciLow: new Float64Array(P), ciHigh: new Float64Array(P), level, difference: new Float64Array(P) };
}
