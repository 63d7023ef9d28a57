import { describe, expect, it } from 'vitest';
import { fitSpectrum } from '../../src/core/spectrum/aperiodic-fit.ts';
import { modelLog10 } from '../../src/core/spectrum/aperiodic-model.ts';
import { SpectrumFitError } from '../../src/core/spectrum/fit-error.ts';
import { simulateSpectrum } from '../../src/core/simulate/index.ts';
import { Random } from '../../src/core/stats/random.ts';
import { spectrumFrequencies } from './simulated-cases.ts';

const freqs = spectrumFrequencies(); // 0.25 … 60 Hz
const clean = () => modelLog10(freqs, { offset: 2, exponent: 1.5, knee: 0 }, [{ centerHz: 11, height: 0.4, widthHz: 1 }]).map((v) => 10 ** v);

describe('aperiodic + peak fit: bad input and edge cases', () => {
  it.each([
    ['zero', 0],
    ['negative', -1],
    ['NaN', NaN],
    ['infinite', Infinity],
  ])('refuses a %s power value inside the fit range, naming value and frequency', (_name, bad) => {
    const p = clean();
    p[39] = bad; // 10 Hz
    expect(() => fitSpectrum(freqs, p)).toThrow(SpectrumFitError);
    expect(() => fitSpectrum(freqs, p)).toThrow(new RegExp(`power: value ${String(bad)} at 10 Hz`));
  });

  it('ignores bad values outside the fit range (they are not fitted)', () => {
    const p = clean();
    p[239] = NaN; // 60 Hz
    expect(fitSpectrum(freqs, p).exponent).toBeCloseTo(1.5, 6);
  });

  it('refuses a fit range outside the frequencies, an inverted range and mismatched lengths', () => {
    expect(() => fitSpectrum(freqs, clean(), { fitRangeHz: [1, 80] })).toThrow(/not covered by the frequencies 0.25–60 Hz/);
    expect(() => fitSpectrum(freqs, clean(), { fitRangeHz: [0.1, 40] })).toThrow(SpectrumFitError);
    expect(() => fitSpectrum(freqs, clean(), { fitRangeHz: [30, 20] })).toThrow(/fitRangeHz: invalid range/);
    expect(() => fitSpectrum(freqs, clean(), { fitRangeHz: [0, 20] })).toThrow(/fitRangeHz: invalid range/);
    expect(() => fitSpectrum(freqs, clean().subarray(1))).toThrow(/length 239 differs/);
    expect(() => fitSpectrum(freqs, clean(), { peakWidthHz: [2, 1] })).toThrow(/peakWidthHz/);
    expect(() => fitSpectrum(freqs, clean(), { aperiodicForm: 'curved' as never })).toThrow(/aperiodicForm/);
  });

  it('a flat spectrum gives exponent ≈ 0, offset = log10 of the level and no peaks', () => {
    // white noise of 4 µV²/Hz with the noise of 3195 averaged segments (σ ≈ 0.008 log10)
    const p = simulateSpectrum({ aperiodic: { offset: Math.log10(4), exponent: 0, knee: 0 }, peaks: [] }, freqs, 3195, new Random(5));
    for (const mode of ['power-law', 'knee'] as const) {
      const fit = fitSpectrum(freqs, p, { aperiodicForm: mode });
      expect(Math.abs(fit.exponent)).toBeLessThan(0.01);
      expect(fit.peaks).toHaveLength(0);
      if (mode === 'power-law') expect(fit.offset).toBeCloseTo(Math.log10(4), 2);
    }
    // exactly flat: nothing to fit but the level
    const exact = fitSpectrum(freqs, new Float64Array(freqs.length).fill(4));
    expect(exact.exponent).toBeCloseTo(0, 10);
    expect(exact.offset).toBeCloseTo(Math.log10(4), 10);
    expect(exact.peaks).toHaveLength(0);
    expect(exact.rmse).toBeLessThan(1e-12);
  });

  it('recovers a noise-free model exactly, reporting bandwidth as the full width at half maximum', () => {
    const fit = fitSpectrum(freqs, clean());
    expect(fit.offset).toBeCloseTo(2, 6);
    expect(fit.exponent).toBeCloseTo(1.5, 6);
    expect(fit.knee).toBe(0);
    expect(fit.peaks).toHaveLength(1);
    expect(fit.peaks[0].centerHz).toBeCloseTo(11, 5);
    expect(fit.peaks[0].height).toBeCloseTo(0.4, 5);
    expect(fit.peaks[0].widthSdHz).toBeCloseTo(1, 5);
    // a Gaussian falls to half its height at c ± w·√(2 ln 2): FWHM = 2.3548·w (closed form)
    expect(fit.peaks[0].bandwidthHz).toBeCloseTo(2.35482, 4);
    expect(fit.r2).toBeGreaterThan(0.999999);
    expect([fit.fitLoHz, fit.fitHiHz, fit.method]).toEqual([1, 40, 'fit']);
  });

  it('drops a peak centred at the edge of the fit range', () => {
    const p = modelLog10(freqs, { offset: 2, exponent: 1.5, knee: 0 }, [{ centerHz: 1.2, height: 0.5, widthHz: 1 }]).map((v) => 10 ** v);
    const fit = fitSpectrum(freqs, p, { fitRangeHz: [1, 40] });
    expect(fit.peaks.every((q) => q.centerHz > 2)).toBe(true);
  });

  it('keeps one of two peaks closer than the sum of their widths (the higher one)', () => {
    const p = modelLog10(freqs, { offset: 2, exponent: 1.5, knee: 0 }, [
      { centerHz: 12, height: 0.5, widthHz: 1.2 },
      { centerHz: 13.5, height: 0.2, widthHz: 1.0 },
    ]).map((v) => 10 ** v);
    const fit = fitSpectrum(freqs, p);
    const near = fit.peaks.filter((q) => q.centerHz > 10 && q.centerHz < 16);
    expect(near).toHaveLength(1);
  });
});
