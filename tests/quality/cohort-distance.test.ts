/**
 * Cohort distance as a robust z. Outside reference: numpy (python3, numpy 2.4) computing the
 * same definition — bin-wise median of log10 spectra, RMS log distance, then
 * (d − median(d)) / (1.4826·MAD(d)) with np.median — on the same seeded spectra.
 * Plus a closed-form case: spectra that are the same shape shifted by constant offsets c_i
 * (log10 units) have d_i = |c_i − median(c)| exactly, worked by hand below.
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { cohortDistance } from '../../src/core/quality/cohort-distance.ts';
import { Random } from '../../src/core/stats/random.ts';

const freqs = Float64Array.from({ length: 181 }, (_, k) => k * 0.25);
const shape = Float64Array.from(freqs, (f) => 50 / (1 + f * f));

function numpyZ(spectra: Float64Array[]): number[] {
  const code = `
import json, sys, numpy as np
d = json.load(sys.stdin); f = np.array(d['f']); P = np.log10(np.array(d['p']))
sel = (f >= 1) & (f <= 40)
L = P[:, sel]
m = np.median(L, axis=0)
dist = np.sqrt(np.mean((L - m) ** 2, axis=1))
med = np.median(dist); mad = np.median(np.abs(dist - med))
print(json.dumps(((dist - med) / (1.4826 * mad)).tolist()))`;
  const out = execFileSync('python3', ['-c', code], { input: JSON.stringify({ f: Array.from(freqs), p: spectra.map((s) => Array.from(s)) }) });
  return JSON.parse(out.toString());
}

describe('cohort distance', () => {
  it('robust z equals numpy on 12 seeded noisy spectra, one of them far off and flagged', () => {
    const rng = new Random(21);
    const spectra = Array.from({ length: 12 }, (_, i) =>
      Float64Array.from(shape, (p) => p * Math.pow(10, 0.05 * rng.normal() + (i === 7 ? 0.6 * rng.normal() : 0))),
    );
    const rows = cohortDistance(
      'C4',
      'N2',
      freqs,
      spectra.map((power, i) => ({ recordingId: `r${i}`, power })),
    );
    const z = numpyZ(spectra);
    rows.forEach((r, i) => expect(r.value!).toBeCloseTo(z[i], 9));
    expect(rows.filter((r) => r.flagged).map((r) => r.recordingId)).toEqual(['r7']);
    expect(rows[7].reason).toMatch(/robust z \d+\.\d \(threshold 3\.5\)/);
  });

  it('constant offsets: d_i = |c_i − median(c)| and z by hand', () => {
    // c = [0, 0.1, −0.1, 0.2, −0.05, 1.0, 0.05]; median(c) = 0.05
    // d = |c − 0.05| = [0.05, 0.05, 0.15, 0.15, 0.10, 0.95, 0]; median(d) = 0.10
    // |d − 0.10| = [0.05, 0.05, 0.05, 0.05, 0, 0.85, 0.10]; MAD = 0.05
    // z = (d − 0.10) / (1.4826 · 0.05) = [−0.6745, −0.6745, 0.6745, 0.6745, 0, 11.466, −1.349]
    const c = [0, 0.1, -0.1, 0.2, -0.05, 1.0, 0.05];
    const rows = cohortDistance(
      'O1',
      'N3',
      freqs,
      c.map((ci, i) => ({ recordingId: `s${i}`, power: Float64Array.from(shape, (p) => p * Math.pow(10, ci)) })),
    );
    const expectedD = [0.05, 0.05, 0.15, 0.15, 0.1, 0.95, 0];
    const expectedZ = expectedD.map((d) => (d - 0.1) / (1.4826 * 0.05));
    rows.forEach((r, i) => {
      expect(r.distanceLog10).toBeCloseTo(expectedD[i], 12);
      expect(r.value!).toBeCloseTo(expectedZ[i], 9);
    });
    expect(expectedZ[5]).toBeCloseTo(11.466, 3);
    expect(rows.map((r) => r.flagged)).toEqual([false, false, false, false, false, true, false]);
    // a spectrum closer than usual (negative z) is never flagged
    expect(rows[6].value!).toBeLessThan(0);
  });

  it('too few recordings: not assessable; bad power: a typed error', () => {
    const few = cohortDistance(
      'C3',
      'N2',
      freqs,
      [0, 1, 2].map((i) => ({ recordingId: `x${i}`, power: shape })),
    );
    expect(few.every((r) => r.value === null && !r.flagged)).toBe(true);
    expect(few[0].reason).toMatch(/3 recordings, fewer than 5/);
    const bad = Float64Array.from(shape);
    bad[10] = 0;
    expect(() => cohortDistance('C3', 'N2', freqs, [{ recordingId: 'b', power: bad }])).toThrow(/recording b: power 0 at 2\.5 Hz/);
  });
});
