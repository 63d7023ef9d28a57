/**
 * Threshold metrics and the combined cell score, at and around their stated defaults:
 * rejected fraction 0.3, flat-channel robust SD 2 µV, clipping 0.1 % of samples, aperiodic
 * R² 0.9 and exponent 0–4 (common practice, no published standard), clean epochs 20.
 * Values are worked by hand in the comments.
 */
import { describe, expect, it } from 'vitest';
import {
  aperiodicQuality,
  cellScore,
  cleanEpochs,
  clipping,
  flatChannel,
  rejectedFraction,
  SEVERITY_CAP,
  type QualityRow,
} from '../../src/core/quality/index.ts';

const cell = { channel: 'F3', stage: 'N2' as const };

describe('threshold metrics', () => {
  it('rejected fraction: 36 of 100 epochs → 0.36, flagged with the reasons by count', () => {
    const row = rejectedFraction(cell, 100, { amplitude: 6, 'muscle-outlier': 30, flat: 0 });
    expect(row.value).toBe(0.36);
    expect(row.flagged).toBe(true);
    expect(row.reason).toBe('36.0 % of 100 epochs rejected (muscle-outlier 30, amplitude 6); more than 30.0 %');
    expect(row.severity).toBeCloseTo(1.2, 12); // 0.36 / 0.3
    expect(rejectedFraction(cell, 100, { amplitude: 30 }).flagged).toBe(false); // exactly 0.3 is not above
    expect(() => rejectedFraction(cell, 10, { amplitude: 11 })).toThrow(/11 rejected epochs out of 10/);
    expect(rejectedFraction(cell, 0, {}).value).toBeNull();
  });

  it('flat channel: robust SD 0.8 µV flagged (severity 2.5), 0 µV flat, 12 µV clean', () => {
    const low = flatChannel(cell, 0.8);
    expect([low.flagged, low.severity]).toEqual([true, 2.5]);
    expect(low.reason).toMatch(/near-flat channel: robust SD 0\.80 µV, below 2 µV/);
    const zero = flatChannel(cell, 0);
    expect([zero.flagged, zero.severity, zero.reason]).toEqual([true, SEVERITY_CAP, 'flat channel: the signal never changes']);
    expect(flatChannel(cell, 12).flagged).toBe(false);
    expect(() => flatChannel(cell, Number.NaN)).toThrow(/invalid robustSdUv/);
  });

  it('clipping: 5 of 1000 samples (0.5 %) flagged, 1 of 1000 (0.1 %) not', () => {
    const row = clipping(cell, 1000, 5);
    expect([row.value, row.flagged]).toEqual([0.005, true]);
    expect(row.severity).toBeCloseTo(5, 12);
    expect(row.reason).toBe('clipping: 0.5 % of samples at the digital limits (more than 0.1 %)');
    expect(clipping(cell, 1000, 1).flagged).toBe(false);
    expect(() => clipping(cell, 10, 11)).toThrow(/invalid nAtLimits/);
  });

  it('aperiodic fit: R² 0.85 flagged (severity 1.5), exponent 4.6 flagged, failed fit flagged', () => {
    const [r2, ex] = aperiodicQuality(cell, { r2: 0.85, exponent: 4.6 });
    expect([r2.flagged, ex.flagged]).toEqual([true, true]);
    expect(r2.severity).toBeCloseTo(1.5, 12); // (1 − 0.85)/(1 − 0.9)
    expect(ex.severity).toBeCloseTo(1.3, 12); // |4.6 − 2| / 2
    expect(ex.reason).toBe('aperiodic exponent 4.60 outside the plausible range 0–4');
    const [ok, okEx] = aperiodicQuality(cell, { r2: 0.97, exponent: 1.8 });
    expect([ok.flagged, okEx.flagged]).toEqual([false, false]);
    const [failed] = aperiodicQuality(cell, { r2: null, exponent: null });
    expect([failed.value, failed.flagged, failed.reason]).toEqual([null, true, 'aperiodic fit failed']);
  });

  it('clean epochs: 12 in N2 flagged against 20, 20 not', () => {
    const row = cleanEpochs(cell, 12);
    expect([row.value, row.flagged, row.reason]).toEqual([12, true, 'only 12 clean epochs in N2 (minimum 20)']);
    expect(cleanEpochs(cell, 20).flagged).toBe(false);
    expect(cleanEpochs(cell, 0).severity).toBe(SEVERITY_CAP);
  });
});

describe('cell score', () => {
  it('is the highest severity capped at 2, with the worst metric and flagged reasons worst first', () => {
    const rows: QualityRow[] = [
      flatChannel(cell, 12), // severity 2/12
      clipping(cell, 1000, 2), // severity 2, flagged
      rejectedFraction(cell, 100, { amplitude: 40 }), // severity 4/3, flagged
    ];
    const s = cellScore(rows);
    expect(s.score).toBe(2);
    expect(s.worst).toBe('clipping');
    expect(s.nFlagged).toBe(2);
    expect(s.reasons[0]).toMatch(/^clipping/);
    expect(s.reasons[1]).toMatch(/^40\.0 % of 100 epochs rejected/);
    const clean = cellScore([flatChannel(cell, 12), cleanEpochs(cell, 80)]);
    expect(clean.score).toBeCloseTo(0.25, 12); // max(2/12, 20/80)
    expect(clean.nFlagged).toBe(0);
    expect(cellScore([])).toEqual({ score: 0, nFlagged: 0, worst: null, reasons: [] });
  });
});

describe('stages too short to judge a channel', () => {
  it('makes clean-epochs a note, not a flag, when the night scored fewer epochs than the minimum', () => {
    const cell = { channel: 'C3', stage: 'N1' as const };
    // 6 scored N1 epochs, 5 clean, minimum 10: the stage is short, the channel is not at fault
    const short = cleanEpochs(cell, 5, { minEpochs: 10 }, 6);
    expect(short.flagged).toBe(false);
    expect(short.reason).toMatch(/only 6 scored epochs of N1/);
    // 40 scored, 5 clean: rejection removed them, so it is flagged
    expect(cleanEpochs(cell, 5, { minEpochs: 10 }, 40).flagged).toBe(true);
  });

  it('reports but does not flag the rejected share of a handful of epochs', () => {
    const cell = { channel: 'C3', stage: 'N1' as const };
    const few = rejectedFraction(cell, 6, { amplitude: 3 }, { maxFraction: 0.3, minEpochs: 10 });
    expect(few.value).toBe(0.5);
    expect(few.flagged).toBe(false);
    expect(few.reason).toMatch(/too few epochs to flag/);
    expect(rejectedFraction(cell, 60, { amplitude: 30 }, { maxFraction: 0.3, minEpochs: 10 }).flagged).toBe(true);
  });
});
