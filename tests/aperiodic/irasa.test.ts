import { describe, expect, it } from 'vitest';
import { Irasa, irasa } from '../../src/core/spectrum/irasa.ts';
import { SpectrumFitError } from '../../src/core/spectrum/fit-error.ts';
import { fitPowerLawLine } from '../../src/core/spectrum/power-law-line.ts';
import { powerLawNoise } from './power-law-noise.ts';

// Signal: 1/f^χ noise by spectral synthesis, 2^17 samples at 256 Hz (512 s), RMS 20 µV, plus a
// 10 µV 10-Hz sinusoid. IRASA (Wen & Liu 2016) must recover χ within ±0.1 over 2–40 Hz.
const FS = 256;
const N = 1 << 17;

function signal(exponent: number, seed: number): Float64Array {
  const x = powerLawNoise(N, FS, exponent, 20, seed);
  for (let i = 0; i < N; i++) x[i] += 10 * Math.sin((2 * Math.PI * 10 * i) / FS);
  return x;
}

describe('IRASA', () => {
  it.each([1.5, 2.0])('recovers the exponent %s of power-law noise with a 10-Hz sinusoid within ±0.1', (exponent) => {
    const r = irasa(signal(exponent, 11), FS, { fitRangeHz: [2, 40] });
    expect(Math.abs(r.fit.exponent - exponent)).toBeLessThan(0.1);
    expect(r.fit.method).toBe('irasa');
    expect(r.fit.knee).toBe(0);
    // the sinusoid is in the oscillatory part, not the aperiodic one (10 Hz = bin 40 at 0.25 Hz)
    expect(r.freqsHz[40]).toBe(10);
    expect(r.totalPsd[40] / r.aperiodicPsd[40]).toBeGreaterThan(50);
    // a plain log-log line through the total spectrum is pulled by the peak (why IRASA is used)
    const f: number[] = [];
    const y: number[] = [];
    r.freqsHz.forEach((v, k) => {
      if (v >= 2 && v <= 40) {
        f.push(v);
        y.push(Math.log10(r.totalPsd[k]));
      }
    });
    expect(Math.abs(fitPowerLawLine(f, y).exponent - exponent)).toBeGreaterThan(Math.abs(r.fit.exponent - exponent));
  });

  it('limits spectra to fs/(2·h_max) and refuses a fit range above it', () => {
    const r = irasa(signal(1.5, 12).subarray(0, 8192), FS, { fitRangeHz: [1, 30] });
    expect(r.maxFreqHz).toBeCloseTo(256 / 3.8, 12);
    expect(r.freqsHz[r.freqsHz.length - 1]).toBeLessThanOrEqual(r.maxFreqHz);
    expect(() => new Irasa(FS, { fitRangeHz: [1, 70] })).toThrow(/above the IRASA limit fs\/\(2·h_max\) = 67.368 Hz/);
    expect(() => new Irasa(FS, { resamplingFactors: [0.9] })).toThrow(SpectrumFitError);
  });

  it('accumulating two halves equals fitting them as two stretches of one stage', () => {
    const x = signal(2.0, 13).subarray(0, 16384);
    const est = new Irasa(FS, { fitRangeHz: [2, 40] });
    est.add(x, 0, 8192);
    est.add(x, 8192, 8192);
    const both = est.result();
    const first = irasa(x.subarray(0, 8192), FS, { fitRangeHz: [2, 40] });
    const second = irasa(x.subarray(8192), FS, { fitRangeHz: [2, 40] });
    // equal segment counts per half, so the total PSD is the mean of the halves' PSDs
    for (let k = 0; k < both.freqsHz.length; k++) {
      expect(both.totalPsd[k]).toBeCloseTo((first.totalPsd[k] + second.totalPsd[k]) / 2, 10);
    }
    expect(both.nSegments).toBe(first.nSegments + second.nSegments);
    expect(() => est.add([1, NaN, 3])).toThrow(/sample 1 is NaN/);
  });
});
