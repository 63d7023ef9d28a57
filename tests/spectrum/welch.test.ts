import { describe, expect, it } from 'vitest';
import { Welch, welch } from '../../src/core/spectrum/welch.ts';
import { medianBias } from '../../src/core/spectrum/median-bias.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

function maxRelError(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / Math.abs(b[i]));
  return worst;
}

function noise(n: number, seed: number): Float64Array {
  const rng = new Random(seed);
  const x = new Float64Array(n);
  let prev = 0;
  // red-ish noise plus a sine, so the spectrum spans several decades like EEG
  for (let i = 0; i < n; i++) {
    prev = 0.95 * prev + rng.normal();
    x[i] = 20 * prev + 5 * Math.sin(0.37 * i) + 3;
  }
  return x;
}

describe('Welch PSD', () => {
  it('reproduces scipy test-suite golden vectors (impulse pair, fs = 1)', () => {
    // scipy/signal/tests/test_spectral.py, TestWelch: x = zeros(16), x[0] = x[8] = 1
    const x = new Float64Array(16);
    x[0] = 1;
    x[8] = 1;
    const p8 = welch(x, 1, { segmentS: 8 }).psd;
    const expected8 = [0.08333333, 0.15277778, 0.22222222, 0.22222222, 0.11111111];
    expect(Array.from(p8)).toHaveLength(5);
    for (let k = 0; k < 5; k++) expect(p8[k]).toBeCloseTo(expected8[k], 7);
    const p9 = welch(x, 1, { segmentS: 9, overlap: 4 / 9 }).psd;
    const expected9 = [0.12477455, 0.23430933, 0.17072113, 0.17072113, 0.17072113];
    for (let k = 0; k < 5; k++) expect(p9[k]).toBeCloseTo(expected9[k], 7);
  });

  it('equals scipy.signal.welch to 1e-4 relative per bin across sampling rates and segment lengths', () => {
    // reference: scipy.signal.welch (scipy 1.17 on this machine), window hann, 50 % overlap,
    // detrend constant, density scaling, one-sided
    // (odd and even segment counts, power-of-two and other lengths, and one large DC offset: the
    // mean path removes the mean in frequency, so an offset must not leak into other bins)
    const cases: { fs: number; segmentS: number; average: 'mean' | 'median'; offset?: number }[] = [
      { fs: 128, segmentS: 4, average: 'mean' },
      { fs: 250, segmentS: 4, average: 'mean' },
      { fs: 256, segmentS: 2, average: 'mean' },
      { fs: 500, segmentS: 4, average: 'median' },
      { fs: 512, segmentS: 5, average: 'mean' },
      { fs: 200, segmentS: 3, average: 'median' },
      { fs: 256, segmentS: 4, average: 'mean', offset: 5000 },
      { fs: 250, segmentS: 3, average: 'mean', offset: -2000 },
    ];
    for (const [i, c] of cases.entries()) {
      const x = noise(c.fs * 30, 11 + i).map((v) => v + (c.offset ?? 0));
      const ours = welch(x, c.fs, { segmentS: c.segmentS, average: c.average });
      const ref = runPython<{ f: number[]; p: number[] }>(
        `from scipy.signal import welch\nx = numpy.fromfile(inputs['x'])\n` +
          `f, p = welch(x, fs=${c.fs}, nperseg=${c.fs * c.segmentS}, average='${c.average}')\n` +
          `print(json.dumps({'f': f.tolist(), 'p': p.tolist()}))`,
        { x },
      );
      expect(ours.psd.length).toBe(ref.p.length);
      expect(maxRelError(ours.freqsHz.subarray(1), ref.f.slice(1))).toBeLessThan(1e-12);
      expect(maxRelError(ours.psd, ref.p)).toBeLessThan(1e-4);
    }
  });

  it('keeps bins aligned at k/segmentS Hz for every sampling rate', () => {
    for (const fs of [128, 250, 256, 500, 512]) {
      const est = new Welch(fs, { segmentS: 4, maxFreqHz: 45 });
      expect(est.freqStepHz).toBe(0.25);
      expect(est.nBins).toBe(181); // 0 … 45 Hz in 0.25-Hz steps
    }
  });

  it('satisfies Parseval: the density integrates to the variance of white noise (within 1 %)', () => {
    // physical identity: ∫ S(f) df over 0 … Nyquist equals the variance (common practice)
    const fs = 256;
    const rng = new Random(5);
    const x = new Float64Array(fs * 600);
    for (let i = 0; i < x.length; i++) x[i] = 7 * rng.normal();
    const { psd, freqsHz } = welch(x, fs, { segmentS: 4 });
    const df = freqsHz[1] - freqsHz[0];
    let integral = 0;
    for (const p of psd) integral += p * df;
    let mean = 0;
    for (const v of x) mean += v / x.length;
    let variance = 0;
    for (const v of x) variance += ((v - mean) * (v - mean)) / x.length;
    expect(Math.abs(integral / variance - 1)).toBeLessThan(0.01);
  });

  it('gives a sine of amplitude A a peak that integrates to A²/2', () => {
    // a sine's power is A²/2 (common practice); Hann leakage spreads it over neighbouring bins
    const fs = 250;
    const amplitude = 12;
    const x = new Float64Array(fs * 60);
    for (let i = 0; i < x.length; i++) x[i] = amplitude * Math.sin((2 * Math.PI * 10 * i) / fs);
    const { psd, freqsHz } = welch(x, fs, { segmentS: 4 });
    const df = freqsHz[1];
    let peak = 0;
    for (let k = 0; k < psd.length; k++) if (Math.abs(freqsHz[k] - 10) <= 1) peak += psd[k] * df;
    expect(peak / ((amplitude * amplitude) / 2)).toBeCloseTo(1, 3);
  });

  it('rejects segment lengths that are not whole samples and too-short signals', () => {
    expect(() => new Welch(250, { segmentS: 0.003 })).toThrow(/whole number of samples/);
    expect(() => welch(new Float64Array(100), 256, { segmentS: 4 })).toThrow(/shorter than one segment/);
    expect(() => new Welch(256, { overlap: 1 })).toThrow(/invalid overlap/);
  });
});

describe('median bias', () => {
  it('matches the values given for scipy.signal.welch (Allen et al. 2012)', () => {
    expect(medianBias(1)).toBe(1);
    expect(medianBias(2)).toBe(1);
    expect(medianBias(3)).toBeCloseTo(0.8333333, 6);
    expect(medianBias(4)).toBeCloseTo(0.8333333, 6);
    expect(medianBias(5)).toBeCloseTo(0.7833333, 6);
    expect(medianBias(100001)).toBeCloseTo(Math.LN2, 4);
  });
});
