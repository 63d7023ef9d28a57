import { describe, expect, it } from 'vitest';
import binomialQuantile from '@stdlib/stats-base-dists-binomial-quantile';
import { runPermutationTest } from '../../src/core/stats/index.ts';
import { delaunayNeighbours } from '../../src/core/montage/adjacency.ts';
import { Random } from '../../src/core/stats/random.ts';
import { gridNoise } from './grid-noise.ts';

// Size (issue 5): 200 simulated null datasets × 500 permutations, 16 vs 16 subjects × 8 channels ×
// 40 bins (320 points), smooth correlated noise (grid-noise.ts), Welch t, cluster mass and TFCE
// (E = 0.5, H = 2, dh = 0.1) from the same permutations. 100,000 permutations in all; about
// 10–15 s on one idle core, well under 90 s on the loaded 2-core machine.
const channels = ['F3', 'Fz', 'F4', 'C3', 'Cz', 'C4', 'P3', 'P4'];
const nFreqs = 40;
const freqsHz = Array.from({ length: nFreqs }, (_, i) => 1 + 0.5 * i);
const neighbours = delaunayNeighbours(channels);
const group = Array.from({ length: 32 }, (_, s) => (s < 16 ? 0 : 1));

describe('family-wise error under the null', () => {
  it('cluster-mass test and TFCE reject in about 5 % of null datasets (99 % binomial interval)', () => {
    const datasets = 200;
    const rng = new Random(2026);
    let clusterHits = 0;
    let tfceHits = 0;
    for (let d = 0; d < datasets; d++) {
      const data = gridNoise(32, channels.length, nFreqs, neighbours, rng);
      const r = runPermutationTest({ channels, freqsHz, data, design: { kind: 'groups', group } }, { permutations: 500, seed: 1000 + d, tfce: true });
      if (r.clusters.some((c) => c.p <= 0.05)) clusterHits++;
      if (r.tfce!.pCorrected.some((p) => p <= 0.05)) tfceHits++;
    }
    // 99 % central interval of Binomial(200, 0.05) from @stdlib/stats-base-dists-binomial-quantile
    const lo = binomialQuantile(0.005, datasets, 0.05);
    const hi = binomialQuantile(0.995, datasets, 0.05);
    console.log(
      `null FWER over ${datasets} datasets × 500 permutations: cluster mass ${clusterHits}/${datasets} = ${(clusterHits / datasets).toFixed(3)}, TFCE ${tfceHits}/${datasets} = ${(tfceHits / datasets).toFixed(3)}; 99 % binomial interval [${lo}, ${hi}]`,
    );
    expect(clusterHits).toBeGreaterThanOrEqual(lo);
    expect(clusterHits).toBeLessThanOrEqual(hi);
    expect(tfceHits).toBeGreaterThanOrEqual(lo);
    expect(tfceHits).toBeLessThanOrEqual(hi);
  });
});

describe('a planted effect', () => {
  it('is covered by a significant positive cluster over the planted channels and band', () => {
    // planted: group 1 + 1.6 at C3, Cz, C4 in 11–16 Hz (bins 20–30); noise sd ≈ 1.07, so the
    // expected t ≈ 1.5·√8 ≈ 4.2 and each planted point passes the threshold (2.04) with
    // probability ≈ 0.99 — coverage tests the clustering, not the power
    const rng = new Random(77);
    const data = gridNoise(32, channels.length, nFreqs, neighbours, rng);
    const plantedChannels = ['C3', 'Cz', 'C4'].map((c) => channels.indexOf(c));
    const planted = new Set<number>();
    for (const c of plantedChannels) for (let f = 20; f <= 30; f++) planted.add(c * nFreqs + f);
    const P = channels.length * nFreqs;
    for (let s = 16; s < 32; s++) for (const p of planted) data[s * P + p] += 1.6;
    const r = runPermutationTest(
      { channels, freqsHz, data, design: { kind: 'groups', group, groupNames: ['control', 'patient'] } },
      { permutations: 1000, seed: 5, tfce: true },
    );
    const best = r.clusters[0];
    console.log(
      `planted effect: best cluster p = ${best.p}, ${best.fminHz}–${best.fmaxHz} Hz, channels ${best.channels.join(',')}, ${best.points.length} points`,
    );
    expect(best.p).toBeLessThanOrEqual(0.01);
    expect(best.sign).toBe(1);
    const covered = best.points.filter((p) => planted.has(p)).length;
    expect(covered / planted.size).toBeGreaterThanOrEqual(0.8);
    // most of the cluster lies on the planted region (smoothing spreads it a little)
    expect(covered / best.points.length).toBeGreaterThanOrEqual(0.6);
    for (const c of ['C3', 'Cz', 'C4']) expect(best.channels).toContain(c);
    expect(best.fminHz).toBeLessThanOrEqual(11.5);
    expect(best.fmaxHz).toBeGreaterThanOrEqual(15.5);
    // no other significant cluster away from the effect
    expect(r.clusters.filter((c) => c.p <= 0.05).length).toBe(1);
    // TFCE: the planted points are significant, the points far from them are not
    const tfceSignificant = r.tfce!.pCorrected.filter((p, i) => p <= 0.05 && planted.has(i)).length;
    expect(tfceSignificant / planted.size).toBeGreaterThanOrEqual(0.6);
  });
});
