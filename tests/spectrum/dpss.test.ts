import { describe, expect, it } from 'vitest';
import { concentrationRatios, slepianTapers } from '../../src/core/spectrum/dpss.ts';
import { largestEigenpairs } from '../../src/core/spectrum/tridiagonal-eigen.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

/** Signs of each vector made to agree with the reference's (largest-magnitude sample), so only the shape is compared. */
function aligned(ours: Float64Array, ref: number[]): Float64Array {
  let at = 0;
  for (let i = 1; i < ref.length; i++) if (Math.abs(ref[i]) > Math.abs(ref[at])) at = i;
  const s = Math.sign(ours[at]) === Math.sign(ref[at]) ? 1 : -1;
  return ours.map((v) => s * v);
}

const maxAbs = (a: ArrayLike<number>, b: ArrayLike<number>) => {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
};

describe('symmetric tridiagonal eigenpairs (bisection + inverse iteration)', () => {
  it('equal scipy.linalg.eigh_tridiagonal on a random matrix (largest 4, to 1e-10)', () => {
    const rng = new Random(5);
    const n = 60;
    const d = Float64Array.from({ length: n }, () => rng.normal() * 3);
    const e = Float64Array.from({ length: n - 1 }, () => rng.normal());
    const ours = largestEigenpairs(d, e, 4);
    // outside reference: scipy.linalg.eigh_tridiagonal (LAPACK) on the same matrix
    const ref = runPython<{ w: number[]; v: number[][] }>(
      `from scipy.linalg import eigh_tridiagonal\nd = numpy.fromfile(inputs['d']); e = numpy.fromfile(inputs['e'])\n` +
        `w, v = eigh_tridiagonal(d, e, select='i', select_range=(${n - 4}, ${n - 1}))\n` +
        `print(json.dumps({'w': w[::-1].tolist(), 'v': v[:, ::-1].T.tolist()}))`,
      { d, e },
    );
    for (let k = 0; k < 4; k++) {
      expect(Math.abs(ours.values[k] - ref.w[k])).toBeLessThan(1e-10 * Math.max(1, Math.abs(ref.w[k])));
      expect(maxAbs(aligned(ours.vectors[k], ref.v[k]), ref.v[k])).toBeLessThan(1e-10);
    }
  });

  it('refuses a bad size or count, naming the value', () => {
    expect(() => largestEigenpairs([1, 2], [1, 1], 1)).toThrow(/needs 1 values, got 2/);
    expect(() => largestEigenpairs([1, 2], [1], 3)).toThrow(/invalid number of eigenpairs: 3/);
  });
});

describe('Slepian tapers', () => {
  // outside reference: scipy.signal.windows.dpss(M, NW, Kmax, return_ratios=True) (scipy 1.17 here:
  // l2-normalised tapers, Percival & Walden's sign convention); lengths even, odd, power of two or not
  const cases: [number, number, number][] = [
    [1024, 2, 3],
    [1000, 3, 5],
    [999, 2, 3],
    [512, 2.5, 4],
    [2048, 4, 7],
  ];
  const ref = runPython<{ v: number[][]; r: number[] }[]>(
    `from scipy.signal.windows import dpss\nout = []\n` +
      `for (m, nw, k) in ${JSON.stringify(cases)}:\n` +
      `    v, r = dpss(m, nw, k, return_ratios=True)\n` +
      `    out.append({'v': v.tolist(), 'r': r.tolist()})\n` +
      `print(json.dumps(out))`,
  );

  it('equal scipy dpss tapers to 1e-8 after sign alignment, and concentration ratios to 1e-8', () => {
    cases.forEach(([n, nw, k], c) => {
      const t = slepianTapers(n, nw, k);
      const ratios = concentrationRatios(t);
      for (let j = 0; j < k; j++) {
        expect(maxAbs(aligned(t.tapers[j], ref[c].v[j]), ref[c].v[j]), `N ${n}, NW ${nw}, taper ${j}`).toBeLessThan(1e-8);
        expect(Math.abs(ratios[j] - ref[c].r[j]), `N ${n}, NW ${nw}, ratio ${j}`).toBeLessThan(1e-8);
      }
    });
  });

  it("follow scipy's sign convention without alignment (even: positive sum; odd: positive first lobe)", () => {
    cases.forEach(([n, nw, k], c) => {
      const t = slepianTapers(n, nw, k);
      for (let j = 0; j < k; j++) expect(maxAbs(t.tapers[j], ref[c].v[j])).toBeLessThan(1e-8);
    });
  });

  it('reproduce the figures seen for dpss(1024, 2, 3) and are orthonormal', () => {
    // shared/STANDARDS.md, "Multitaper spectra": ratios 0.99994276, 0.9975618, 0.95939106;
    // first samples of v_0 0.00083178, 0.00085935, 0.00088734 (scipy 1.17 on this machine)
    const t = slepianTapers(1024, 2, 3);
    const r = concentrationRatios(t);
    [0.99994276, 0.9975618, 0.95939106].forEach((v, i) => expect(r[i]).toBeCloseTo(v, 7));
    [0.00083178, 0.00085935, 0.00088734].forEach((v, i) => expect(t.tapers[0][i]).toBeCloseTo(v, 8));
    for (let a = 0; a < 3; a++) {
      for (let b = 0; b < 3; b++) {
        let dot = 0;
        for (let i = 0; i < 1024; i++) dot += t.tapers[a][i] * t.tapers[b][i];
        expect(dot).toBeCloseTo(a === b ? 1 : 0, 12);
      }
    }
  });

  it('refuse NW or K out of range, naming the value', () => {
    expect(() => slepianTapers(100, 60, 3)).toThrow(/NW: 60/);
    expect(() => slepianTapers(100, 2, 0)).toThrow(/number of tapers: 0/);
  });
});
