import { describe, expect, it } from 'vitest';
import { preparePermutationTest, runPermutations, type PermutationTestInput, type PermutationTestOptions } from '../../src/core/stats/index.ts';
import { relabelling } from '../../src/core/stats/relabelling.ts';
import { Random } from '../../src/core/stats/random.ts';
import { delaunayNeighbours } from '../../src/core/montage/adjacency.ts';
import { gridNoise } from './grid-noise.ts';
import { runPython } from '../helpers/python.ts';

// Outside reference for the whole null path: for the same relabellings, the point statistic from
// scipy.stats (ttest_ind with/without equal_var, ttest_1samp of sign-flipped differences) or numpy
// (Pearson r of the permuted covariate, as its t) and the largest |cluster mass| from scipy.sparse.csgraph.connected_components
// over the same point graph. Unequal groups (12 vs 9) exercise the screened Welch path.
// Size: 21 subjects × 6 channels × 20 bins, 200 permutations per design.
const channels = ['F3', 'F4', 'C3', 'C4', 'P3', 'P4'];
const F = 20;
const P = channels.length * F;
const n = 21;
const freqsHz = Array.from({ length: F }, (_, i) => 1 + i);
const rng = new Random(314);
const data = gridNoise(n, channels.length, F, delaunayNeighbours(channels), rng);
for (let s = 12; s < n; s++) for (let p = 40; p < 60; p++) data[s * P + p] += 0.9;
const second = Float64Array.from(data, (x, i) => x + 0.3 * rng.normal() + (i % P < 30 ? 0.25 : 0));
const group = Array.from({ length: n }, (_, s) => (s < 12 ? 0 : 1));
const covariate = Array.from({ length: n }, (_, s) => s + rng.normal() * 3);

const designs: { name: string; kind: string; input: PermutationTestInput; options: PermutationTestOptions }[] = [
  { name: 'welch', kind: 'welch', input: { channels, freqsHz, data, design: { kind: 'groups', group } }, options: {} },
  { name: 'student', kind: 'student', input: { channels, freqsHz, data, design: { kind: 'groups', group } }, options: { statistic: 'student-t' } },
  { name: 'paired', kind: 'paired', input: { channels, freqsHz, data, design: { kind: 'paired', second } }, options: {} },
  { name: 'pearson', kind: 'pearson', input: { channels, freqsHz, data, design: { kind: 'covariate', covariate } }, options: {} },
];

describe('null maxima equal a numpy/scipy implementation on the same relabellings', () => {
  it('Welch (unequal groups), Student, paired sign flips and covariate permutation', () => {
    const m = 200;
    const ours: Record<string, number[]> = {};
    const arrays: Record<string, ArrayLike<number>> = { data, second, covariate };
    let edges: Int32Array | null = null;
    const thresholds: Record<string, number> = {};
    for (const d of designs) {
      const prepared = preparePermutationTest(d.input, { ...d.options, permutations: m, seed: 9 });
      edges = prepared.test.edges;
      thresholds[d.name] = prepared.test.threshold;
      ours[d.name] = Array.from(runPermutations(prepared.test, { from: 0, to: m }).cluster!);
      const labels = new Float64Array(m * n);
      const out = new Int32Array(n);
      const work = new Int32Array(n);
      for (let i = 0; i < m; i++) {
        relabelling(prepared.test.scheme, i, out, work);
        labels.set(out, i * n);
      }
      arrays[`labels_${d.name}`] = labels;
    }
    arrays.edges = edges!;
    const ref = runPython<Record<string, number[]>>(
      `from scipy import stats
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
n, P, m = ${n}, ${P}, ${m}
thr = json.loads('${JSON.stringify(thresholds)}')
X = numpy.fromfile(inputs['data']).reshape(n, P)
Y = numpy.fromfile(inputs['second']).reshape(n, P)
x = numpy.fromfile(inputs['covariate'])
e = numpy.fromfile(inputs['edges']).astype(int).reshape(-1, 2)
def max_mass(t, th):
    best = 0.0
    for sign in (1, -1):
        mask = sign * t > th
        if not mask.any(): continue
        keep = mask[e[:, 0]] & mask[e[:, 1]]
        g = coo_matrix((numpy.ones(keep.sum()), (e[keep, 0], e[keep, 1])), shape=(P, P))
        lab = connected_components(g, directed=False)[1]
        best = max(best, float(numpy.abs(numpy.bincount(lab[mask], weights=t[mask])).max()))
    return best
out = {}
for name in ('welch', 'student', 'paired', 'pearson'):
    L = numpy.fromfile(inputs['labels_' + name]).reshape(m, n).astype(int)
    res = []
    for i in range(m):
        if name in ('welch', 'student'):
            g = L[i] == 1
            t = stats.ttest_ind(X[g], X[~g], equal_var=(name == 'student')).statistic
        elif name == 'paired':
            t = stats.ttest_1samp((Y - X) * L[i][:, None], 0.0).statistic
        else:
            xc = x[L[i]] - x.mean(); Xc = X - X.mean(axis=0)
            r = (xc @ Xc) / numpy.sqrt((xc ** 2).sum() * (Xc ** 2).sum(axis=0))
            t = r * numpy.sqrt((n - 2) / (1 - r ** 2))
        res.append(max_mass(t, thr[name]))
    out[name] = res
print(json.dumps(out))`,
      arrays,
    );
    for (const d of designs) {
      let worst = 0;
      for (let i = 0; i < m; i++) worst = Math.max(worst, Math.abs(ours[d.name][i] - ref[d.name][i]) / Math.max(1, ref[d.name][i]));
      expect(worst, d.name).toBeLessThan(1e-9);
      expect(ref[d.name].filter((v) => v > 0).length, `${d.name}: permutations with clusters`).toBeGreaterThan(20);
    }
  });
});
