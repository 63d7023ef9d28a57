/**
 * Whether one simulated study found the planted effect. A finding is significant at level alpha
 * (p ≤ alpha; with the permutation p = (1 + b)/(1 + m) this keeps the test's level, Phipson &
 * Smyth 2010):
 *   cluster-mass, cluster-size   a cluster with corrected p ≤ alpha
 *   tfce                         a point with TFCE-corrected p ≤ alpha
 *   none                         a point with uncorrected p ≤ alpha (no correction)
 * The planted effect is found when a significant finding of the planted sign shares at least one
 * point with the planted region (effect 0: either sign counts, so the share found is the rate of
 * false findings in the region — over the whole map, the family-wise error rate).
 */
import type { PermutationTestResult } from '../stats/index.ts';

export type Correction = 'cluster-mass' | 'cluster-size' | 'tfce' | 'none';

export interface SimulationOutcome {
  /** a significant finding of the planted sign overlaps the planted region */
  found: boolean;
  /** a significant finding anywhere, either sign */
  any: boolean;
}

export function judgeStudy(r: PermutationTestResult, correction: Correction, region: Uint8Array, effect: number, alpha: number): SimulationOutcome {
  if (region.length !== r.stat.length) throw new RangeError(`region has ${region.length} points, the result ${r.stat.length}`);
  const sign = Math.sign(effect);
  const signOk = (s: number) => sign === 0 || Math.sign(s) === sign;
  if (correction === 'cluster-mass' || correction === 'cluster-size') {
    const significant = r.clusters.filter((k) => k.p <= alpha);
    return { found: significant.some((k) => signOk(k.sign) && k.points.some((p) => region[p] === 1)), any: significant.length > 0 };
  }
  const pOf: ArrayLike<number> = correction === 'tfce' ? r.tfce!.pCorrected : r.pUncorrected;
  let found = false;
  let any = false;
  for (let p = 0; p < r.stat.length; p++) {
    // a point left out (missing values) has a NaN statistic and p: never significant
    if (!(pOf[p] <= alpha)) continue;
    any = true;
    if (region[p] === 1 && signOk(r.stat[p])) found = true;
  }
  return { found, any };
}
