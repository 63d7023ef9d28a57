import { describe, expect, it } from 'vitest';
import { runPython } from '../helpers/python.ts';
import { outlierCriticalZ, outlierRate } from '../../src/core/quality/outlier-limit.ts';

describe('the stated rate of the outlier rule', () => {
  it('is 2Φ(−z0) as scipy.stats.norm computes it', () => {
    // outside reference: scipy.stats.norm.sf
    const ref = runPython<number[]>(`from scipy.stats import norm
print(json.dumps([float(2 * norm.sf(z)) for z in (3, 3.5, 4)]))`);
    [3, 3.5, 4].forEach((z, i) => expect(outlierRate(z)).toBeCloseTo(ref[i], 15));
    expect(outlierRate(3.5)).toBeCloseTo(4.6526e-4, 8);
  });
});

describe('the limit c_n against a brute-force simulation in numpy', () => {
  // Outside reference: numpy draws Gaussian samples of n and counts the values whose modified z
  // |x − median|/(1.4826·MAD) exceeds our c_n; the share must be the stated 2Φ(−z0). Size: 2·10⁶
  // values per n, about 930 expected exceedances at z0 = 3.5 (relative standard error 3.3 %);
  // our c_n carries its own Monte Carlo error (outlier-limit.ts: 1.5 % in c at n = 10, about 6 %
  // in the rate), so the share must lie within 20 % (40 % at n = 5, where c_n is least certain).
  const cases: [number, number][] = [
    [5, 3.5],
    [10, 3.5],
    [14, 3.5],
    [20, 3.5],
    [40, 3.5],
    [100, 3.5],
    [14, 3],
    [40, 4],
  ];
  const limits = cases.map(([n, z]) => outlierCriticalZ(n, z));
  const shares = runPython<number[]>(`
rng = numpy.random.default_rng(5)
cases = ${JSON.stringify(cases)}
limits = ${JSON.stringify(limits)}
out = []
for (n, z), c in zip(cases, limits):
  hits, total = 0, 0
  for _ in range(4):
    x = rng.standard_normal((500000 // n, n))
    med = numpy.median(x, axis=1, keepdims=True)
    mad = numpy.median(numpy.abs(x - med), axis=1, keepdims=True)
    hits += int((numpy.abs(x - med) > c * 1.4826 * mad).sum())
    total += x.size
  out.append(hits / total)
print(json.dumps(out))
`);
  cases.forEach(([n, z], i) => {
    it(`n = ${n}, z0 = ${z}: c_n = ${limits[i].toFixed(2)} removes 2Φ(−z0) of Gaussian values`, () => {
      const stated = outlierRate(z);
      console.log(`n=${n} z0=${z}: c_n ${limits[i].toFixed(3)}, numpy share ${shares[i].toExponential(3)} vs stated ${stated.toExponential(3)}`);
      expect(Math.abs(shares[i] / stated - 1)).toBeLessThan(n === 5 ? 0.4 : 0.2);
    });
  });

  it('grows as the stage shrinks and tends to z0', () => {
    expect(outlierCriticalZ(10, 3.5)).toBeGreaterThan(outlierCriticalZ(20, 3.5));
    expect(outlierCriticalZ(20, 3.5)).toBeGreaterThan(outlierCriticalZ(100, 3.5));
    expect(outlierCriticalZ(2000, 3.5)).toBeGreaterThan(3.5);
    expect(outlierCriticalZ(2000, 3.5)).toBeLessThan(3.55);
  });

  it('is the same number every time (fixed seed)', () => {
    expect(outlierCriticalZ(17, 3.5)).toBe(outlierCriticalZ(17, 3.5));
  });

  it('rejects bad input naming the value', () => {
    expect(() => outlierCriticalZ(4, 3.5)).toThrow(/4 \(at least 5\)/);
    expect(() => outlierCriticalZ(10, 1.5)).toThrow(/outlier z: 1.5 \(at least 2/);
    // a z so large that 2Φ(−z) underflows switches the rule off (the ingest tests do this)
    expect(outlierCriticalZ(10, 1e9)).toBe(Infinity);
  });
});
