import { describe, expect, it } from 'vitest';
import { concatNullMaxima, preparePermutationTest, runPermutationTest, dataVary, runPermutations } from '../../src/core/stats/index.ts';
import { binomial, makeScheme, relabelling } from '../../src/core/stats/relabelling.ts';
import { Random } from '../../src/core/stats/random.ts';

describe('relabelling schemes', () => {
  it('exact mode enumerates every relabelling once', () => {
    // C(6, 3) = 20 group assignments, 2^4 = 16 sign vectors, 4! = 24 row orders (counting; common practice)
    const labels = Uint8Array.from([0, 0, 0, 1, 1, 1]);
    const cases = [
      { scheme: makeScheme('relabel', 6, 1000, 1, labels), count: 20 },
      { scheme: makeScheme('sign-flip', 4, 1000, 1), count: 16 },
      { scheme: makeScheme('permute-rows', 4, 1000, 1), count: 24 },
    ];
    for (const { scheme, count } of cases) {
      expect(scheme.exact).toBe(true);
      expect(scheme.count).toBe(count);
      const seen = new Set<string>();
      const out = new Int32Array(scheme.n);
      const work = new Int32Array(scheme.n);
      for (let i = 0; i < scheme.count; i++) {
        relabelling(scheme, i, out, work);
        if (scheme.kind === 'relabel') expect(out.reduce((a, b) => a + b, 0)).toBe(3);
        if (scheme.kind === 'permute-rows') expect([...out].sort().join()).toBe('0,1,2,3');
        seen.add(out.join());
      }
      expect(seen.size).toBe(count);
    }
    expect(binomial(32, 16)).toBe(601080390);
  });

  it('random mode: permutation i depends only on (seed, i), keeps group sizes, differs across seeds', () => {
    const labels = Uint8Array.from({ length: 30 }, (_, i) => (i < 12 ? 1 : 0));
    const a = makeScheme('relabel', 30, 500, 7, labels);
    const b = makeScheme('relabel', 30, 500, 8, labels);
    expect(a.exact).toBe(false);
    const x = new Int32Array(30);
    const y = new Int32Array(30);
    const w = new Int32Array(30);
    relabelling(a, 123, x, w);
    relabelling(a, 5, y, w); // another index in between must not matter
    relabelling(a, 123, y, w);
    expect([...y]).toEqual([...x]);
    expect(x.reduce((s, v) => s + v, 0)).toBe(12);
    relabelling(b, 123, y, w);
    expect([...y]).not.toEqual([...x]);
  });
});

describe('exact permutation p-values on a tiny design', () => {
  it('3 vs 3 subjects: 20 relabellings, p = 2/20', () => {
    // One channel × 3 bins; at every bin group 0 = {0, 1, 2}, group 1 = {10, 11, 12} (plus a
    // per-bin offset, to which t is blind). By hand: observed Welch t = (11 − 1)/√(1/3 + 1/3)
    // = 12.247 at each bin, above the threshold t_{0.975}(4) = 2.776, so one cluster of 3 bins with
    // mass 36.74. Any other of the C(6,3) = 20 splits puts a low value (≤ 2) and a high value
    // (≥ 10) in the same group — possibly both groups: a group of 3 holding values a ≤ 2 and
    // b ≥ 10 has SS ≥ (b − a)²/2 ≥ 32, variance ≥ 16; the group difference is at most
    // (2 + 11 + 12 − 0 − 1 − 10)/3 = 4.67, and both groups are mixed, so |t| ≤ 4.67/√(16/3 + 16/3)
    // = 1.43 < 2.776: no cluster, null maximum 0. Only the observed split and its mirror
    // (t = −12.247, |mass| 36.74) reach the observed mass: p = 2/20 = 0.1.
    const base = [0, 1, 2, 10, 11, 12];
    const data = new Float64Array(6 * 3);
    for (let s = 0; s < 6; s++) for (let f = 0; f < 3; f++) data[s * 3 + f] = base[s] + 5 * f;
    const r = runPermutationTest(
      { channels: ['Cz'], freqsHz: [1, 2, 3], data, design: { kind: 'groups', group: [0, 0, 0, 1, 1, 1] } },
      { permutations: 1000, tfce: true },
    );
    expect(r.exact).toBe(true);
    expect(r.permutations).toBe(20);
    expect(r.clusters.length).toBe(1);
    expect(r.clusters[0].sign).toBe(1);
    expect(r.clusters[0].mass).toBeCloseTo(3 * Math.sqrt(150), 9);
    expect(r.clusters[0].p).toBe(2 / 20);
    // TFCE: the same two relabellings reach the observed score, every mixed split scores below
    expect(r.tfce!.pCorrected).toEqual([0.1, 0.1, 0.1]);
    expect(r.pValueRule).toMatch(/exact/);
    // cluster size as the statistic: the same two relabellings give a 3-point cluster
    const bySize = runPermutationTest(
      { channels: ['Cz'], freqsHz: [1, 2, 3], data, design: { kind: 'groups', group: [0, 0, 0, 1, 1, 1] } },
      { permutations: 1000, clusterMeasure: 'size' },
    );
    expect(bySize.clusters.map((c) => [c.size, c.p])).toEqual([[3, 0.1]]);
  });

  it('paired, 4 subjects: 16 sign flips, p = 2/16', () => {
    // By hand: differences d = {1.0, 1.1, 1.2, 1.3}, Σd = 4.6, Σd² = 5.34 (fixed under flips).
    // Observed: SS = 5.34 − 4.6²/4 = 0.05, sd = √(0.05/3) = 0.1291, t = 1.15/(0.1291/2) = 17.8 >
    // t_{0.975}(3) = 3.182 → one cluster. Flipping one sign: |Σ| ≤ 4.6 − 2·1.0 = 2.6, SS ≥ 5.34 −
    // 2.6²/4 = 3.65, sd ≥ 1.10, |t| ≤ 0.65/(1.10/2) = 1.18; flipping two: |Σ| ≤ 0.4, |t| < 0.2;
    // flipping three mirrors one. So only the identity and the all-flipped vector (t = −17.8)
    // reach the observed |mass|: p = 2/16 = 0.125.
    const first = new Float64Array([0, 0, 0, 0]);
    const second = new Float64Array([1.0, 1.1, 1.2, 1.3]);
    const r = runPermutationTest({ channels: ['Cz'], freqsHz: [12], data: first, design: { kind: 'paired', second } }, { permutations: 100 });
    expect(r.exact).toBe(true);
    expect(r.permutations).toBe(16);
    expect(r.clusters[0].p).toBe(2 / 16);
  });
});

describe('splitting permutations over ranges', () => {
  it('two partial runs concatenate to the single run, bit for bit, and the result is the same', () => {
    const n = 20;
    const channels = ['F3', 'F4', 'C3', 'C4', 'P3', 'P4'];
    const freqsHz = Array.from({ length: 12 }, (_, i) => 1 + i);
    const P = channels.length * freqsHz.length;
    const rng = new Random(3);
    const data = Float64Array.from({ length: n * P }, () => rng.normal());
    for (let s = 10; s < n; s++) for (let p = 0; p < 20; p++) data[s * P + p] += 0.8;
    const input = { channels, freqsHz, data, design: { kind: 'groups' as const, group: Array.from({ length: n }, (_, s) => (s < 10 ? 0 : 1)) } };
    const options = { permutations: 300, seed: 11, tfce: true };
    const whole = preparePermutationTest(input, options);
    const all = runPermutations(whole.test, { from: 0, to: 300 });
    // the second thread prepares its own copy from the same input
    const other = preparePermutationTest(input, options);
    const parts = [runPermutations(other.test, { from: 170, to: 300 }), runPermutations(whole.test, { from: 0, to: 170 })];
    const joined = concatNullMaxima(parts);
    expect([...joined.cluster!]).toEqual([...all.cluster!]);
    expect([...joined.tfce!]).toEqual([...all.tfce!]);
    expect(new Set(all.cluster).size).toBeGreaterThan(50); // the null maxima really vary
    const progress: [number, number][] = [];
    const once = runPermutationTest(input, options, (done, total) => progress.push([done, total]));
    expect(JSON.stringify(runPermutationTest(input, options))).toBe(JSON.stringify(once));
    expect(progress[progress.length - 1]).toEqual([300, 300]);
    expect(progress.length).toBeGreaterThan(10);
    expect(() => concatNullMaxima([parts[0]])).not.toThrow();
    expect(() => concatNullMaxima([runPermutations(whole.test, { from: 0, to: 100 }), parts[0]])).toThrow(/not contiguous/);
  });
});

describe('data that do not vary', () => {
  // a t statistic divides by the spread of the data; with none it is undefined, not 0 (common practice):
  // a contrast refuses such data (src/core/contrast/run.ts prepareAssembled, a ContrastDataError)
  it('are told apart from data that vary at one point at least (paired: the differences)', () => {
    const data = new Float64Array(6 * 2).fill(1.5);
    const input = { channels: ['Cz'], freqsHz: [10, 11], data, design: { kind: 'groups' as const, group: [0, 0, 0, 1, 1, 1] } };
    expect(dataVary(input)).toBe(false);
    const second = new Float64Array(6 * 2).fill(2.5);
    expect(dataVary({ ...input, design: { kind: 'paired', second } })).toBe(false);
    // missing values are left out
    data[2] = NaN;
    expect(dataVary(input)).toBe(false);
    data[2] = 1.5;
    // one point that varies is enough to test
    data[0] = 2;
    expect(dataVary(input)).toBe(true);
    expect(runPermutationTest(input, { permutations: 20 }).stat).toHaveLength(2);
  });
});
