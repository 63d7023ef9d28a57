import { describe, expect, it } from 'vitest';
import { Random } from '../../src/core/stats/random.ts';
import { TwoGroupT } from '../../src/core/stats/two-group-t.ts';
import { runPython } from '../helpers/python.ts';

// Two-group t at cohort size, where the subset-sum tables fall back to one subject per chunk
// (g = 1: the Σx table is the centred data and Σx² is formed where it is summed). Outside
// reference: scipy.stats.ttest_ind(group1, group0, equal_var=False / True) of the machine's
// python3 (scipy 1.17) at 40 of the points, for the observed labels and for one relabelling.
// Size: 1,001 subjects (500 vs 501) × 7,200 points, 58 MB of float64 data — the smallest size at
// which the table budget of two-group-t.ts forces g = 1 with about this many points. At g = 1 the
// sums run over the raw data and are centred afterwards (values here: |mean|/sd up to about 10,
// as log10 spectra), so the agreement to 1e-9 also checks that centring.

const n = 1001;
const P = 7200;
const rng = new Random(7);
const data = new Float64Array(n * P);
// log-PSD-like values: a per-point level, per-subject offset, noise; a few points with a shift
for (let s = 0; s < n; s++) {
  const offset = 0.3 * rng.normal();
  for (let p = 0; p < P; p++) data[s * P + p] = -1 + 0.001 * p + offset + 0.5 * rng.normal() + (s % 2 === 1 && p % 997 === 0 ? 0.4 : 0);
}
const labels = Uint8Array.from({ length: n }, (_, s) => s % 2);
const relabel = new Int32Array(n);
{
  const order = Int32Array.from({ length: n }, (_, i) => i);
  new Random(3).shuffle(order);
  for (let s = 0; s < n; s++) relabel[s] = labels[order[s]];
}
// the 8 shifted points (997·k) and 32 spread over the rest
const points = Array.from({ length: 40 }, (_, i) => (i < 8 ? 997 * i : 13 + Math.floor(((i - 8) * (P - 14)) / 31)));

function columns(ps: number[]): number[] {
  const out: number[] = [];
  for (let s = 0; s < n; s++) for (const p of ps) out.push(data[s * P + p]);
  return out;
}

interface Ref {
  welch: number[];
  welchDf: number[];
  student: number[];
  welchPerm: number[];
}
const ref = runPython<Ref>(
  `from scipy import stats
x = numpy.fromfile(inputs['x']).reshape(${n}, ${points.length})
g = numpy.fromfile(inputs['g']).astype(int)
h = numpy.fromfile(inputs['h']).astype(int)
w = stats.ttest_ind(x[g == 1], x[g == 0], equal_var=False)
s = stats.ttest_ind(x[g == 1], x[g == 0], equal_var=True)
wp = stats.ttest_ind(x[h == 1], x[h == 0], equal_var=False)
print(json.dumps({"welch": w.statistic.tolist(), "welchDf": w.df.tolist(), "student": s.statistic.tolist(), "welchPerm": wp.statistic.tolist()}))`,
  { x: columns(points), g: labels, h: relabel },
);

describe('two-group t with one subject per table chunk (cohort size)', () => {
  const welch = new TwoGroupT(data, n, P, labels, 'welch');
  const student = new TwoGroupT(data, n, P, labels, 'pooled');

  it('uses g = 1 at this size, summing the data as given without changing them', () => {
    expect(welch.chunk).toBe(1);
    const before = Float64Array.from(data);
    const t = new Float64Array(P);
    welch.compute(relabel, t);
    welch.computeNull(relabel, t, 1.2);
    student.computeNull(relabel, t, 1.2);
    let changed = 0;
    for (let i = 0; i < data.length; i++) if (data[i] !== before[i]) changed++;
    expect(changed).toBe(0);
  });

  it("Welch's and Student's t and Welch–Satterthwaite df equal scipy's", () => {
    const t = new Float64Array(P);
    const df = new Float64Array(P);
    welch.compute(welch.observedRelabelling(), t, df);
    const ts = new Float64Array(P);
    student.compute(student.observedRelabelling(), ts);
    points.forEach((p, i) => {
      expect(t[p]).toBeCloseTo(ref.welch[i], 9);
      expect(df[p] / ref.welchDf[i]).toBeCloseTo(1, 9);
      expect(ts[p]).toBeCloseTo(ref.student[i], 9);
    });
    // the planted shift is found (group 1 higher at p = 997·k)
    expect(t[997]).toBeGreaterThan(3);
  });

  it("the null statistic of a relabelling equals scipy's Welch t where it passes the threshold, and |t| ≤ threshold elsewhere", () => {
    const exact = new Float64Array(P);
    welch.compute(relabel, exact);
    points.forEach((p, i) => expect(exact[p]).toBeCloseTo(ref.welchPerm[i], 9));
    const threshold = 1.2;
    const screened = new Float64Array(P);
    welch.computeNull(relabel, screened, threshold);
    let passed = 0;
    for (let p = 0; p < P; p++) {
      if (Math.abs(exact[p]) > threshold) {
        expect(screened[p]).toBeCloseTo(exact[p], 10); // Σx² summed in another order
        passed++;
      } else expect(Math.abs(screened[p])).toBeLessThanOrEqual(threshold);
    }
    expect(passed).toBeGreaterThan(100);
  });
});
