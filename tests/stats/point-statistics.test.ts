import { describe, expect, it } from 'vitest';
import { runPermutationTest, type PermutationTestResult } from '../../src/core/stats/index.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

// Outside reference: scipy.stats (ttest_ind with and without equal_var, ttest_rel, ttest_1samp,
// pearsonr, spearmanr) and numpy.linalg.lstsq, scipy 1.17 / numpy 2.4 in the machine's python3.
// Data: 14 subjects (6 in group 0, 8 in group 1) × 2 channels × 3 bins; one scipy run for all.

const channels = ['C3', 'C4'];
const freqsHz = [10, 10.5, 11];
const n = 14;
const P = channels.length * freqsHz.length;
const rng = new Random(42);
const first = Float64Array.from({ length: n * P }, () => 1 + rng.normal());
const second = Float64Array.from(first, (x, i) => x + 0.4 + 0.8 * rng.normal() + (i % P) * 0.05);
const group = Array.from({ length: n }, (_, s) => (s < 6 ? 0 : 1));
for (let s = 6; s < n; s++) for (let p = 0; p < P; p++) first[s * P + p] += 0.3 * p - 0.5 + (s % 3) * 0.2;
const covariate = Array.from({ length: n }, () => 40 + 10 * rng.normal());
const nuisance1 = Array.from({ length: n }, () => rng.normal());
const nuisance2 = Array.from({ length: n }, (_, s) => s % 2);
// a version of the data with ties, for Spearman (rounded to one decimal; covariate to whole 5s)
const tied = Float64Array.from(first, (x) => Math.round(x * 10) / 10);
const tiedCovariate = covariate.map((c) => Math.round(c / 5) * 5);
for (let s = 0; s < n; s++) first[s * P] += 0.05 * covariate[s]; // some correlation at point 0

interface Ref {
  welch: { t: number[]; df: number[]; p: number[] };
  student: { t: number[]; df: number[]; p: number[] };
  paired: { t: number[]; df: number[]; p: number[] };
  one: { t: number[]; df: number[]; p: number[] };
  pearson: { r: number[]; p: number[] };
  spearman: { r: number[]; p: number[] };
  lmCov: { t: number[]; p: number[]; beta: number[]; partial: number[] };
  lmGroup: { t: number[]; p: number[]; beta: number[] };
  hedges: { g: number[]; lo: number[]; hi: number[]; diff: number[] };
  hedgesPaired: { g: number[]; lo: number[]; hi: number[]; diff: number[] };
  fisher: { lo: number[]; hi: number[] };
}

const ref = runPython<Ref>(
  `from scipy import stats
n, P = ${n}, ${P}
a = numpy.fromfile(inputs['first']).reshape(n, P)
b = numpy.fromfile(inputs['second']).reshape(n, P)
g = numpy.fromfile(inputs['group']).astype(int)
x = numpy.fromfile(inputs['covariate'])
z1 = numpy.fromfile(inputs['n1']); z2 = numpy.fromfile(inputs['n2'])
ty = numpy.fromfile(inputs['tied']).reshape(n, P); tx = numpy.fromfile(inputs['tiedCov'])
L = lambda v: [float(u) for u in numpy.atleast_1d(v)]
def tt(r): return {"t": L(r.statistic), "df": L(r.df), "p": L(r.pvalue)}
out = {}
out["welch"] = tt(stats.ttest_ind(a[g == 1], a[g == 0], equal_var=False))
out["student"] = tt(stats.ttest_ind(a[g == 1], a[g == 0], equal_var=True))
out["paired"] = tt(stats.ttest_rel(b, a))
out["one"] = tt(stats.ttest_1samp(a, 0.0))
pr = [stats.pearsonr(x, a[:, p]) for p in range(P)]
out["pearson"] = {"r": [float(r.statistic) for r in pr], "p": [float(r.pvalue) for r in pr]}
sr = [stats.spearmanr(tx, ty[:, p]) for p in range(P)]
out["spearman"] = {"r": [float(r.statistic) for r in sr], "p": [float(r.pvalue) for r in sr]}
def lm(effect):
    X = numpy.column_stack([effect, numpy.ones(n), z1, z2])
    coef, _, _, _ = numpy.linalg.lstsq(X, a, rcond=None)
    resid = a - X @ coef
    dof = n - X.shape[1]
    s2 = (resid ** 2).sum(axis=0) / dof
    se = numpy.sqrt(s2 * numpy.linalg.inv(X.T @ X)[0, 0])
    t = coef[0] / se
    Z = X[:, 1:]
    rx = effect - Z @ numpy.linalg.lstsq(Z, effect, rcond=None)[0]
    ry = a - Z @ numpy.linalg.lstsq(Z, a, rcond=None)[0]
    partial = [float(numpy.corrcoef(rx, ry[:, p])[0, 1]) for p in range(P)]
    return {"t": L(t), "p": L(2 * stats.t.sf(numpy.abs(t), dof)), "beta": L(coef[0]), "partial": partial}
out["lmCov"] = lm(x)
out["lmGroup"] = lm(g.astype(float))
# Hedges' g with the Hedges & Olkin (1985) large-sample variance, written out in numpy
a0, a1 = a[g == 0], a[g == 1]; n0, n1 = len(a0), len(a1)
sp = numpy.sqrt(((n0 - 1) * a0.var(axis=0, ddof=1) + (n1 - 1) * a1.var(axis=0, ddof=1)) / (n0 + n1 - 2))
J = 1 - 3 / (4 * (n0 + n1) - 9)
gg = J * (a1.mean(axis=0) - a0.mean(axis=0)) / sp
se = numpy.sqrt((n0 + n1) / (n0 * n1) + gg ** 2 / (2 * (n0 + n1)))
zc = stats.norm.ppf(0.975)
out["hedges"] = {"g": L(gg), "lo": L(gg - zc * se), "hi": L(gg + zc * se), "diff": L(a1.mean(axis=0) - a0.mean(axis=0))}
d = b - a; nd = d.shape[0]
Jz = 1 - 3 / (4 * (nd - 1) - 1)
gz = Jz * d.mean(axis=0) / d.std(axis=0, ddof=1)
sez = numpy.sqrt(1 / nd + gz ** 2 / (2 * nd))
out["hedgesPaired"] = {"g": L(gz), "lo": L(gz - zc * sez), "hi": L(gz + zc * sez), "diff": L(d.mean(axis=0))}
rr = numpy.array(out["pearson"]["r"])
out["fisher"] = {"lo": L(numpy.tanh(numpy.arctanh(rr) - zc / numpy.sqrt(n - 3))), "hi": L(numpy.tanh(numpy.arctanh(rr) + zc / numpy.sqrt(n - 3)))}
print(json.dumps(out))`,
  { first, second, group, covariate, n1: nuisance1, n2: nuisance2, tied, tiedCov: tiedCovariate },
);

function close(actual: ArrayLike<number> | number, expected: number[], what: string): void {
  expect(expected.length, what).toBe(P);
  for (let i = 0; i < expected.length; i++) {
    const a = typeof actual === 'number' ? actual : actual[i];
    expect(Math.abs(a - expected[i]), `${what}[${i}]: ${a} vs ${expected[i]}`).toBeLessThanOrEqual(1e-6 * Math.max(1, Math.abs(expected[i])));
  }
}

const quick = { clusterMeasure: 'none' as const, permutations: 10 };

describe('point statistics equal scipy.stats', () => {
  it('Welch t, Welch–Satterthwaite df and p (ttest_ind, equal_var=False), group 1 minus group 0', () => {
    const r = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'groups', group } }, quick);
    expect(r.statistic).toBe('welch-t');
    close(r.stat, ref.welch.t, 't');
    close(r.df as number[], ref.welch.df, 'df');
    close(r.pUncorrected, ref.welch.p, 'p');
    expect(r.nPerGroup).toEqual([6, 8]);
  });

  it('pooled-variance Student t (ttest_ind, equal_var=True)', () => {
    const r = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'groups', group } }, { ...quick, statistic: 'student-t' });
    close(r.stat, ref.student.t, 't');
    close(r.df as number, ref.student.df, 'df');
    close(r.pUncorrected, ref.student.p, 'p');
  });

  it('paired t of second − first (ttest_rel) and one-sample t (ttest_1samp)', () => {
    const paired = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'paired', second } }, quick);
    close(paired.stat, ref.paired.t, 't');
    close(paired.df as number, ref.paired.df, 'df');
    close(paired.pUncorrected, ref.paired.p, 'p');
    const one = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'one-sample' } }, quick);
    close(one.stat, ref.one.t, 't');
    close(one.pUncorrected, ref.one.p, 'p');
  });

  it('Pearson r and p (pearsonr), t = r√((n−2)/(1−r²)), Fisher-z interval', () => {
    const r = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'covariate', covariate } }, quick);
    close(r.effect.value, ref.pearson.r, 'r');
    close(r.pUncorrected, ref.pearson.p, 'p');
    close(
      r.stat,
      ref.pearson.r.map((x) => x * Math.sqrt((n - 2) / (1 - x * x))),
      't',
    );
    expect(Math.abs(ref.pearson.r[0])).toBeGreaterThan(0.3); // the planted correlation at point 0
    close(r.effect.ciLow, ref.fisher.lo, 'ci low');
    close(r.effect.ciHigh, ref.fisher.hi, 'ci high');
  });

  it('Spearman rho with tied values (spearmanr, ties averaged)', () => {
    const r = runPermutationTest(
      { channels, freqsHz, data: tied, design: { kind: 'covariate', covariate: tiedCovariate } },
      { ...quick, statistic: 'spearman' },
    );
    close(r.effect.value, ref.spearman.r, 'rho');
    close(r.pUncorrected, ref.spearman.p, 'p');
  });

  it('linear model with nuisance covariates: t, p, β and partial r equal numpy lstsq', () => {
    const nuisance = [
      { name: 'z1', values: nuisance1 },
      { name: 'z2', values: nuisance2 },
    ];
    const cov: PermutationTestResult = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'covariate', covariate, nuisance } }, quick);
    expect(cov.statistic).toBe('linear-model-t');
    expect(cov.df).toBe(n - 4);
    close(cov.stat, ref.lmCov.t, 't');
    close(cov.pUncorrected, ref.lmCov.p, 'p');
    close(cov.effect.difference!, ref.lmCov.beta, 'beta');
    close(cov.effect.value, ref.lmCov.partial, 'partial r');
    const grp = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'groups', group, nuisance } }, quick);
    close(grp.stat, ref.lmGroup.t, 't');
    close(grp.pUncorrected, ref.lmGroup.p, 'p');
    close(grp.effect.difference!, ref.lmGroup.beta, 'adjusted difference');
  });

  it("Hedges' g with the Hedges & Olkin interval and the mean difference", () => {
    const r = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'groups', group } }, quick);
    expect(r.effect.kind).toBe('hedges-g');
    close(r.effect.value, ref.hedges.g, 'g');
    close(r.effect.ciLow, ref.hedges.lo, 'lo');
    close(r.effect.ciHigh, ref.hedges.hi, 'hi');
    close(r.effect.difference!, ref.hedges.diff, 'difference');
    // paired: g of the differences with J = 1 − 3/(4(n − 1) − 1) and var ≈ 1/n + g²/(2n)
    const paired = runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'paired', second } }, quick);
    close(paired.effect.value, ref.hedgesPaired.g, 'paired g');
    close(paired.effect.ciLow, ref.hedgesPaired.lo, 'paired lo');
    close(paired.effect.ciHigh, ref.hedgesPaired.hi, 'paired hi');
    close(paired.effect.difference!, ref.hedgesPaired.diff, 'paired difference');
  });

  it('fails loudly on bad input, naming the field', () => {
    const bad = Float64Array.from(first);
    bad[3 * P + 4] = NaN;
    expect(() => runPermutationTest({ channels, freqsHz, data: bad, design: { kind: 'groups', group } }, quick)).toThrow(/subject row 3, channel C4, 10.5 Hz/);
    expect(() => runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'groups', group: group.map((g) => g * 2) } }, quick)).toThrow(
      /design.group\[6\]/,
    );
    expect(() => runPermutationTest({ channels, freqsHz, data: first.subarray(1), design: { kind: 'one-sample' } }, quick)).toThrow(
      /multiple of channels × bins/,
    );
    expect(() =>
      runPermutationTest({ channels, freqsHz, data: first, design: { kind: 'covariate', covariate, nuisance: [{ name: 'dup', values: covariate }] } }, quick),
    ).toThrow(/collinear/);
  });
});
