/**
 * The compact epoch spectra (src/core/spectrum/log-quantise.ts): log10 power quantised to 16 bits
 * over each row's range. Stored vs full precision, against numpy's float64 log10 of the same
 * power: the error is at most half a step (uniform quantisation, common practice), i.e.
 * (max − min)/131070 in log10 units.
 */
import { describe, expect, it } from 'vitest';
import { FLOOR_UV2_PER_HZ, dequantiseLog10, quantiseLog10 } from '../../src/core/spectrum/log-quantise.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

describe('log10 power quantised to 16 bits', () => {
  it("keeps every bin within half a step of numpy's log10, the step being the row's range / 65535", () => {
    const rng = new Random(17);
    const rows = 50;
    const n = 121;
    // 1/f² spectra from 0.25 to 30 Hz times χ²-like scatter: four to five decades a row
    const power = new Float64Array(rows * n);
    for (let r = 0; r < rows; r++) for (let b = 0; b < n; b++) power[r * n + b] = (100 / (0.25 + b * 0.25) ** 2) * Math.exp(rng.normal());
    const exact = runPython<number[]>(`print(json.dumps(numpy.log10(numpy.fromfile(inputs['p'])).tolist()))`, { p: power });
    const levels = new Uint16Array(rows * n);
    let worstRatio = 0;
    let worstLog10 = 0;
    for (let r = 0; r < rows; r++) {
      const { lo, step } = quantiseLog10(power, r * n, n, levels, r * n);
      expect(Math.fround(lo)).toBe(lo); // stored as 32-bit floats
      expect(Math.fround(step)).toBe(step);
      let min = Infinity;
      let max = -Infinity;
      for (let b = 0; b < n; b++) [min, max] = [Math.min(min, exact[r * n + b]), Math.max(max, exact[r * n + b])];
      expect(step).toBeLessThanOrEqual(((max - min) / 65535) * (1 + 1e-6));
      for (let b = 0; b < n; b++) {
        const err = Math.abs(dequantiseLog10(lo, step, levels[r * n + b]) - exact[r * n + b]);
        worstRatio = Math.max(worstRatio, err / (step / 2));
        worstLog10 = Math.max(worstLog10, err);
      }
    }
    expect(worstRatio).toBeLessThanOrEqual(1 + 1e-6);
    expect(worstLog10).toBeLessThan(5e-5); // ≈ 4.6 decades / 131070 = 3.5e-5: 0.008 % in power
  });

  it("stores a flat channel's zero power as the floor, and refuses a value that is not a number", () => {
    const levels = new Uint16Array(3);
    const q = quantiseLog10([0, 0, 0], 0, 3, levels, 0);
    expect([q.lo, q.step, ...levels]).toEqual([Math.log10(FLOOR_UV2_PER_HZ), 0, 0, 0, 0]);
    expect(() => quantiseLog10([1, NaN, 2], 0, 3, levels, 0)).toThrow(/bin 1 holds a value that is not a finite number: NaN/);
  });
});
