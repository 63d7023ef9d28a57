// With effect 0 the power is the family-wise error rate: planted over the whole map (every channel
// and frequency of the contrast), "found" is any significant cluster, which under the null must
// happen in alpha = 5 % of studies — inside the 99 % central interval of Binomial(K, 0.05)
// (@stdlib/stats-base-dists-binomial-quantile). Two groups drawn from one reference group are
// exchangeable, so the permutation test is exact: with 199 permutations p = (1 + b)/200 ≤ 0.05
// exactly when b ≤ 9, a level of 10/200 = 0.05 (Phipson & Smyth 2010).
// Size: 800 simulated studies of 12 vs 12, 4 channels × 8–16 Hz (132 points) of N2 log10 PSD from
// 60 synthetic reference subjects, cluster mass, 199 permutations: about 8 s on one core.
import binomialQuantile from '@stdlib/stats-base-dists-binomial-quantile';
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { simulatePower } from '../../src/core/planning/index.ts';
import { syntheticCohort } from './synthetic-cohort.ts';

describe('power at effect 0', () => {
  it('equals the family-wise error rate of cluster-mass correction (99 % binomial interval around 0.05)', () => {
    const { data } = syntheticCohort(120, 4, 21);
    const contrast = parseContrast({
      design: 'groups',
      groups: ['control', 'patient'],
      stage: 'N2',
      fminHz: 8,
      fmaxHz: 16,
      permutations: 199,
      correction: 'cluster-mass',
    });
    const K = 800;
    const r = simulatePower(
      contrast,
      {
        referenceGroup: 'control',
        effect: 0,
        band: { name: 'all', loHz: 8, hiHz: 16 },
        channels: 'all',
        nPerGroup: [12],
        simulations: K,
        seed: 3,
        alpha: 0.05,
      },
      data,
    );
    const p = r.curve[0];
    const lo = binomialQuantile(0.005, K, 0.05);
    const hi = binomialQuantile(0.995, K, 0.05);
    console.log(`effect 0: ${p.found}/${K} studies with a significant cluster (${p.power.toFixed(3)}); 99 % binomial interval [${lo}, ${hi}]`);
    expect(r.referenceSubjects.length).toBe(60);
    expect(p.found).toBeGreaterThanOrEqual(lo);
    expect(p.found).toBeLessThanOrEqual(hi);
    // the planted region is the whole map, so "found" and "any significant finding" coincide
    expect(p.anySignificant).toBe(p.power);
  });
});
