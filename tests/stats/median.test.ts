import { describe, expect, it } from 'vitest';
import { medianInPlace, selectInPlace } from '../../src/core/stats/median.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

describe('median by selection', () => {
  it('equals numpy.median on 300 arrays of sizes 1–120 with ties, and leaves the k-th value in place', () => {
    // reference: numpy.median (numpy 2.4 in the machine's python3); ties from rounding to 1 decimal
    const rng = new Random(7);
    const arrays: Float64Array[] = [];
    for (let t = 0; t < 300; t++) {
      const n = 1 + Math.floor(rng.uniform() * 120);
      const tied = t % 3 === 0;
      arrays.push(Float64Array.from({ length: n }, () => (tied ? Math.round(rng.normal() * 10) / 10 : rng.normal() * 1e3)));
    }
    const flat = new Float64Array(arrays.reduce((s, a) => s + a.length, 0));
    let o = 0;
    for (const a of arrays) {
      flat.set(a, o);
      o += a.length;
    }
    const sizes = Float64Array.from(arrays, (a) => a.length);
    const ref = runPython<number[]>(
      `x = numpy.fromfile(inputs['x']); n = numpy.fromfile(inputs['n']).astype(int)\n` +
        `parts = numpy.split(x, numpy.cumsum(n)[:-1])\nprint(json.dumps([float(numpy.median(p)) for p in parts]))`,
      { x: flat, n: sizes },
    );
    arrays.forEach((a, i) => {
      const sorted = Float64Array.from(a).sort();
      expect(medianInPlace(Float64Array.from(a)) + 0).toBe(ref[i] + 0); // (+0: numpy may print −0 as 0)
      const k = Math.floor(rng.uniform() * a.length);
      const b = Float64Array.from(a);
      expect(selectInPlace(b, k) + 0).toBe(sorted[k] + 0);
      for (let j = 0; j < b.length; j++) expect(j < k ? b[j] <= b[k] : b[j] >= b[k]).toBe(true);
    });
    expect(Number.isNaN(medianInPlace(new Float64Array(0)))).toBe(true);
  });
});
