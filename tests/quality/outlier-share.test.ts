import { describe, expect, it } from 'vitest';
import { runPython } from '../helpers/python.ts';
import { outlierShare } from '../../src/core/quality/outlier-share.ts';

const cell = { channel: 'C3', stage: 'N1' as const };

describe('outlier-share: removals against the rule’s chance rate (issue 24)', () => {
  // outside reference: scipy.stats.binom.sf(k − 1, n, 2Φ(−3.5)) = P(X ≥ k)
  const cases: [number, number][] = [
    [14, 1],
    [14, 2],
    [40, 2],
    [300, 3],
    [300, 1],
    [1000, 4],
  ];
  const tails = runPython<number[]>(`from scipy.stats import binom, norm
p = 2 * norm.sf(3.5)
print(json.dumps([float(binom.sf(k - 1, n, p)) for n, k in ${JSON.stringify(cases)}]))`);

  cases.forEach(([n, k], i) => {
    it(`n = ${n}, k = ${k}: severity from P(X ≥ k) = ${tails[i].toPrecision(3)} (scipy), flagged below 0.001`, () => {
      const row = outlierShare(cell, n, { 'muscle-outlier': k, amplitude: 3 }, { outlierZ: 3.5 });
      expect(row.metric).toBe('outlier-share');
      expect(row.value).toBeCloseTo(k / n, 12);
      expect(row.flagged).toBe(tails[i] < 0.001);
      // severity = log P / log 0.001
      expect(row.severity).toBeCloseTo(Math.min(10, Math.log(tails[i]) / Math.log(0.001)), 6);
      if (row.flagged) expect(row.reason).toMatch(new RegExp(`^muscle-outlier removed ${k} of ${n} epochs .*it may be the rule, not the data$`));
      else expect(row.reason).toBeNull();
    });
  });

  it('judges each rule on its own count, adds both into the value, and ignores the time-domain reasons', () => {
    const row = outlierShare(cell, 14, { 'muscle-outlier': 1, 'broadband-outlier': 2, amplitude: 9 }, { outlierZ: 3.5 });
    expect(row.value).toBeCloseTo(3 / 14, 12);
    expect(row.flagged).toBe(true);
    expect(row.reason).toMatch(/^broadband-outlier removed 2 of 14/);
    const clean = outlierShare(cell, 300, { amplitude: 40 }, { outlierZ: 3.5 });
    expect(clean).toMatchObject({ value: 0, flagged: false, reason: null, severity: 0 });
  });

  it('says so when the rule could not run, and rejects bad counts naming them', () => {
    expect(outlierShare(cell, 4, {}, { outlierZ: 3.5 })).toMatchObject({ value: null, flagged: false, severity: 0 });
    expect(outlierShare(cell, 4, {}, { outlierZ: 3.5 }).reason).toMatch(/only 4 epochs/);
    expect(() => outlierShare(cell, 10, { 'muscle-outlier': 1.5 }, { outlierZ: 3.5 })).toThrow(/muscle-outlier: 1.5/);
    expect(() => outlierShare(cell, 10, { 'muscle-outlier': 8, 'broadband-outlier': 5 }, { outlierZ: 3.5 })).toThrow(/13 outlier removals out of 10/);
    expect(() => outlierShare(cell, -1, {}, { outlierZ: 3.5 })).toThrow(/nJudged: -1/);
  });
});
