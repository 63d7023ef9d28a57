import { describe, expect, it } from 'vitest';
import { rationalFactor, resamplePoly } from '../../src/core/spectrum/resample.ts';
import { SpectrumFitError } from '../../src/core/spectrum/fit-error.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

describe('rational resampler', () => {
  it('equals scipy.signal.resample_poly (default Kaiser β = 5 design) to 1e-12 for the IRASA ratios', () => {
    // outside reference: scipy.signal.resample_poly(x, up, down) of scipy 1.17, default window and padding
    const rng = new Random(3);
    const x = Float64Array.from({ length: 1537 }, (_, i) => 20 * Math.sin(0.05 * i) + 5 * rng.normal());
    const ratios: [number, number][] = [
      [11, 10],
      [10, 11],
      [23, 20],
      [20, 23],
      [19, 10],
      [10, 19],
      [3, 2],
      [2, 4],
      [7, 1],
    ];
    const ref = runPython<number[][]>(
      `from scipy.signal import resample_poly\nx = numpy.fromfile(inputs['x'])\nprint(json.dumps([list(resample_poly(x, u, d)) for u, d in ${JSON.stringify(ratios)}]))`,
      { x },
    );
    ratios.forEach(([u, d], r) => {
      const ours = resamplePoly(x, u, d);
      expect(ours.length).toBe(ref[r].length);
      let worst = 0;
      for (let i = 0; i < ours.length; i++) worst = Math.max(worst, Math.abs(ours[i] - ref[r][i]));
      expect(worst).toBeLessThan(1e-12);
    });
  });

  it('turns IRASA factors into reduced ratios and refuses bad ones', () => {
    expect(rationalFactor(1.15)).toEqual({ up: 23, down: 20 });
    expect(rationalFactor(1.9)).toEqual({ up: 19, down: 10 });
    expect(rationalFactor(1.5)).toEqual({ up: 3, down: 2 });
    expect(() => rationalFactor(Math.SQRT2)).toThrow(SpectrumFitError);
    expect(() => resamplePoly([1, 2, 3], 0, 1)).toThrow(/invalid up factor 0/);
  });
});
