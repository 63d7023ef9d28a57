/**
 * Missing values per point (NaN with input.allowMissing): each point's t, df, p and effect size
 * over the subjects with a value there. Outside reference: scipy.stats (ttest_ind with and
 * without equal_var, ttest_rel, ttest_1samp) on each point's values with the NaNs dropped, and
 * Hedges' g written out in numpy the same way; the exact permutation p of a tiny design against
 * an enumeration of every relabelling in python (itertools.combinations + scipy per relabelling).
 * Data: 14 subjects (6 in group 0, 8 in group 1) × 2 channels × 3 bins with NaNs sprinkled in,
 * one point with a single group-0 value and one with no value at all (both left out).
 */
import { describe, expect, it } from 'vitest';
import { runPermutationTest } from '../../src/core/stats/index.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

const channels = ['C3', 'C4'];
const freqsHz = [10, 10.5, 11];
const n = 14;
const P = channels.length * freqsHz.length;
const rng = new Random(7);
const group = Array.from({ length: n }, (_, s) => (s < 6 ? 0 : 1));
const first = Float64Array.from({ length: n * P }, (_, i) => 1 + rng.normal() + (group[Math.floor(i / P)] === 1 ? 0.2 * (i % P) : 0));
const second = Float64Array.from(first, (x) => x + 0.5 + 0.7 * rng.normal());
// missing values: scattered, plus point 4 with one group-0 value left and point 5 with none
const holes = [
  [0, 0],
  [3, 0],
  [9, 0],
  [2, 1],
  [7, 2],
  [12, 3],
  [13, 3],
  [1, 1],
];
for (const [s, p] of holes) first[s * P + p] = NaN;
second[5 * P + 2] = NaN;
second[10 * P + 0] = NaN;
for (let s = 0; s < 5; s++) first[s * P + 4] = NaN; // group 0 keeps subject 5 only
for (let s = 0; s < n; s++) first[s * P + 5] = NaN;

interface PointRef {
  welch: { t: number; df: number; p: number } | null;
  student: { t: number; df: number; p: number } | null;
  paired: { t: number; df: number; p: number } | null;
  one: { t: number; df: number; p: number } | null;
  g: number | null;
  diff: number | null;
  counts: [number, number];
}

const ref = runPython<PointRef[]>(
  `from scipy import stats
n, P = ${n}, ${P}
a = numpy.fromfile(inputs['first']).reshape(n, P)
b = numpy.fromfile(inputs['second']).reshape(n, P)
g = numpy.fromfile(inputs['group']).astype(int)
def tt(r): return {"t": float(r.statistic), "df": float(r.df), "p": float(r.pvalue)}
out = []
for p in range(P):
    x0 = a[g == 0, p]; x0 = x0[~numpy.isnan(x0)]
    x1 = a[g == 1, p]; x1 = x1[~numpy.isnan(x1)]
    d = b[:, p] - a[:, p]; d = d[~numpy.isnan(d)]
    x = a[:, p]; x = x[~numpy.isnan(x)]
    ok2 = len(x0) >= 2 and len(x1) >= 2
    r = {"counts": [len(x0), len(x1)], "welch": None, "student": None, "paired": None, "one": None, "g": None, "diff": None}
    if ok2:
        r["welch"] = tt(stats.ttest_ind(x1, x0, equal_var=False))
        r["student"] = tt(stats.ttest_ind(x1, x0, equal_var=True))
        n0, n1 = len(x0), len(x1)
        sp = numpy.sqrt(((n0 - 1) * x0.var(ddof=1) + (n1 - 1) * x1.var(ddof=1)) / (n0 + n1 - 2))
        J = 1 - 3 / (4 * (n0 + n1) - 9)  # Hedges & Olkin 1985
        r["g"] = float(J * (x1.mean() - x0.mean()) / sp); r["diff"] = float(x1.mean() - x0.mean())
    if len(d) >= 3: r["paired"] = tt(stats.ttest_1samp(d, 0.0))
    if len(x) >= 3: r["one"] = tt(stats.ttest_1samp(x, 0.0))
    out.append(r)
print(json.dumps(out))`,
  { first, second, group },
);

const quick = { clusterMeasure: 'none' as const, permutations: 10 };
const near = (a: number, b: number, what: string) => expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(b)));

describe('missing values per point equal scipy on the values present', () => {
  it('Welch t, df, p and Hedges g per point; points with too few values left out with their counts', () => {
    const r = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'groups', group }, allowMissing: true }, quick);
    expect(r.missing!.leftOut).toEqual([4, 5]);
    expect(r.missing!.nPerPoint).toEqual([ref.map((x) => x.counts[0]), ref.map((x) => x.counts[1])]);
    for (let p = 0; p < P; p++) {
      const w = ref[p].welch;
      if (!w) {
        expect(r.stat[p], `point ${p}`).toBeNaN();
        expect(r.pUncorrected[p]).toBeNaN();
        expect(r.effect.value[p]).toBeNaN();
        continue;
      }
      near(r.stat[p], w.t, `t[${p}]`);
      near((r.df as number[])[p], w.df, `df[${p}]`);
      near(r.pUncorrected[p], w.p, `p[${p}]`);
      near(r.effect.value[p], ref[p].g!, `g[${p}]`);
      near(r.effect.difference![p], ref[p].diff!, `difference[${p}]`);
    }
  });

  it('Student t with per-point df', () => {
    const r = runPermutationTest(
      { channels, freqsHz, data: first, design: { kind: 'groups', group }, allowMissing: true },
      { ...quick, statistic: 'student-t' },
    );
    for (let p = 0; p < 4; p++) {
      near(r.stat[p], ref[p].student!.t, `t[${p}]`);
      near((r.df as number[])[p], ref[p].student!.df, `df[${p}]`);
      near(r.pUncorrected[p], ref[p].student!.p, `p[${p}]`);
    }
  });

  it('paired t (a pair is missing when either condition is) and one-sample t', () => {
    const paired = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'paired', second }, allowMissing: true }, quick);
    const one = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'one-sample' }, allowMissing: true }, quick);
    for (let p = 0; p < P; p++) {
      for (const [res, r] of [
        [paired, ref[p].paired],
        [one, ref[p].one],
      ] as const) {
        if (!r) {
          expect(res.stat[p]).toBeNaN();
          continue;
        }
        near(res.stat[p], r.t, `t[${p}]`);
        near((res.df as number[])[p], r.df, `df[${p}]`);
        near(res.pUncorrected[p], r.p, `p[${p}]`);
      }
    }
    expect(one.missing!.leftOut).toEqual([5]); // point 4 keeps 9 values in all (one design group)
  });

  it('the exact permutation p of a tiny design equals an enumeration of every relabelling with NaNs dropped', () => {
    // 9 subjects (4 vs 5), one point, two missing values: C(9, 4) = 126 relabellings
    const x = Float64Array.from([0.3, NaN, 1.1, 0.8, 1.9, 2.4, NaN, 1.7, 2.2]);
    const g = [0, 0, 0, 0, 1, 1, 1, 1, 1];
    const r = runPermutationTest(
      { channels: ['Cz'], freqsHz: [13], data: x, design: { kind: 'groups', group: g }, allowMissing: true },
      { permutations: 1000, clusterP: 1 - 1e-9, frequencyAdjacency: false },
    );
    expect(r.exact).toBe(true);
    expect(r.permutations).toBe(126);
    const py = runPython<{ p: number; t: number }>(
      `import itertools
from scipy import stats
x = numpy.fromfile(inputs['x'])
def t(ones):
    a = numpy.array([x[i] for i in range(9) if i in ones]); b = numpy.array([x[i] for i in range(9) if i not in ones])
    a = a[~numpy.isnan(a)]; b = b[~numpy.isnan(b)]
    if len(a) < 2 or len(b) < 2: return 0.0
    return float(stats.ttest_ind(a, b, equal_var=False).statistic)
obs = abs(t({4, 5, 6, 7, 8}))
null = [abs(t(set(c))) for c in itertools.combinations(range(9), 5)]
print(json.dumps({"p": sum(1 for v in null if v >= obs * (1 - 1e-9)) / len(null), "t": t({4, 5, 6, 7, 8})}))`,
      { x },
    );
    near(r.stat[0], py.t, 't');
    expect(r.clusters[0].p).toBeCloseTo(py.p, 12);
  });

  it('complete data give the same numbers with and without allowMissing (the complete-data kernels)', () => {
    const full = Float64Array.from(second);
    full[5 * P + 2] = 0.7;
    full[10 * P + 0] = 1.2;
    const a = runPermutationTest({ channels, freqsHz, data: full, design: { kind: 'groups', group } }, { permutations: 200 });
    const b = runPermutationTest({ channels, freqsHz, data: full, design: { kind: 'groups', group }, allowMissing: true }, { permutations: 200 });
    expect(b).toEqual(a);
    expect(b.missing).toBeUndefined();
  });

  it('refuses missing values where they are not supported, and a NaN without allowMissing', () => {
    const covariate = Array.from({ length: n }, (_, s) => 30 + s);
    expect(() => runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'covariate', covariate }, allowMissing: true }, quick)).toThrow(
      /not for a covariate design/,
    );
    expect(() => runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'groups', group } }, quick)).toThrow(
      /subject row 0, channel C3, 10 Hz is not a finite number/,
    );
    const none = new Float64Array(n * P).fill(NaN);
    expect(() => runPermutationTest({ channels, freqsHz, data: none, design: { kind: 'groups', group }, allowMissing: true }, quick)).toThrow(
      /no point has at least 2 values per group/,
    );
  });
});
