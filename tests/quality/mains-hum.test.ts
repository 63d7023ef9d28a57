/**
 * Mains hum on closed-form spectra: a power law P(f) = 100·f^−1.5 µV²/Hz on a 0.25-Hz grid to
 * 128 Hz (fs 256 Hz, 4-s segments), with and without a line shaped like a bin-centred sinusoid
 * through a Hann window (peak bin L, the two neighbours L/4: |W(±1 bin)|² = 1/4 for the Hann
 * window, a textbook property of its spectrum). The ratio is checked against numpy computing
 * the same definition on the same arrays (python3, numpy 2.4), and on a Welch spectrum of a
 * seeded noise signal with a 2 µV, 50 Hz sinusoid.
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { mainsHum, mainsRatioDb } from '../../src/core/quality/mains-hum.ts';
import { welch } from '../../src/core/spectrum/welch.ts';
import { Random } from '../../src/core/stats/random.ts';

const STEP = 0.25;
const freqs = Float64Array.from({ length: 513 }, (_, k) => k * STEP);
function powerLaw(): Float64Array {
  return Float64Array.from(freqs, (f) => 100 * Math.pow(Math.max(f, STEP), -1.5));
}
function withLine(lineHz: number, times: number): Float64Array {
  const p = powerLaw();
  const k = Math.round(lineHz / STEP);
  const L = times * p[k];
  p[k] += L;
  p[k - 1] += L / 4;
  p[k + 1] += L / 4;
  return p;
}

/** numpy: 10·log10(mean P[|f−f0| ≤ 1] / mean P[3 ≤ |f−f0| ≤ 8]). */
function numpyRatioDb(power: Float64Array, lineHz: number): number {
  const code = `
import json, sys, numpy as np
d = json.load(sys.stdin); f = np.array(d['f']); p = np.array(d['p']); f0 = d['f0']
a = np.abs(f - f0)
print(repr(float(10 * np.log10(p[a <= 1].mean() / p[(a >= 3) & (a <= 8)].mean()))))`;
  const out = execFileSync('python3', ['-c', code], { input: JSON.stringify({ f: Array.from(freqs), p: Array.from(power), f0: lineHz }) });
  return Number(out.toString().trim());
}

const cell = { channel: 'C3', stage: 'N2' as const };

describe('mains hum', () => {
  it('a 50 Hz line is flagged with a reason naming 50 Hz; the ratio equals numpy', () => {
    const p = withLine(50, 50);
    const row = mainsHum(cell, freqs, p);
    expect(row.lineHz).toBe(50);
    expect(row.flagged).toBe(true);
    expect(row.reason).toMatch(/^50 Hz mains line \(detected\)/);
    expect(row.value!).toBeCloseTo(numpyRatioDb(p, 50), 9);
    expect(row.value!).toBeGreaterThan(6);
    expect(row.severity).toBeGreaterThan(1);
  });

  it('the same power law without a line is not flagged (ratio near 0 dB, equal to numpy)', () => {
    const p = powerLaw();
    const row = mainsHum(cell, freqs, p, { lineHz: 50, halfWidthHz: 1, innerHz: 3, outerHz: 8, thresholdDb: 6 });
    expect(row.flagged).toBe(false);
    expect(row.reason).toBeNull();
    expect(row.value!).toBeCloseTo(numpyRatioDb(p, 50), 9);
    expect(Math.abs(row.value!)).toBeLessThan(0.5);
  });

  it('a 60 Hz line is detected as 60 Hz', () => {
    const row = mainsHum(cell, freqs, withLine(60, 50));
    expect(row.lineHz).toBe(60);
    expect(row.reason).toMatch(/^60 Hz mains line/);
  });

  it('a spectrum stopping at 45 Hz: not assessable when detecting, an error when 50 Hz is given', () => {
    const f45 = freqs.subarray(0, 181);
    const p45 = powerLaw().subarray(0, 181);
    const row = mainsHum(cell, f45, p45);
    expect(row.value).toBeNull();
    expect(row.flagged).toBe(false);
    expect(row.reason).toMatch(/not assessable: spectrum ends at 45 Hz/);
    expect(() => mainsHum(cell, f45, p45, { lineHz: 50, halfWidthHz: 1, innerHz: 3, outerHz: 8, thresholdDb: 6 })).toThrow(
      /needs 58 Hz \(compute a high-range spectrum\)/,
    );
    expect(mainsRatioDb(f45, p45, 50)).toBeNull();
  });

  it('Welch spectrum of seeded white noise (SD 5 µV) with a 2 µV 50 Hz sinusoid: flagged; without it: not', () => {
    // Size: 120 s at 256 Hz, 4-s segments, 50 % overlap (59 segments).
    const fs = 256;
    const rng = new Random(3);
    const noise = Float64Array.from({ length: 120 * fs }, () => 5 * rng.normal());
    const hum = Float64Array.from(noise, (v, i) => v + 2 * Math.sin((2 * Math.PI * 50 * i) / fs));
    const clean = welch(noise, fs, { segmentS: 4 });
    const dirty = welch(hum, fs, { segmentS: 4 });
    // Expected ratio for white noise of density 2σ²/fs plus a line of power A²/2 spread over the ±1 Hz band (9 bins):
    // mean density in band ≈ 2σ²/fs + (A²/2)/(9·0.25 Hz) → 10·log10(1 + (2/2.25)/(50/256)) ≈ 7.5 dB (hand computation).
    const a = mainsHum(cell, dirty.freqsHz, dirty.psd);
    const b = mainsHum(cell, clean.freqsHz, clean.psd);
    expect(a.flagged).toBe(true);
    expect(a.lineHz).toBe(50);
    expect(a.value!).toBeGreaterThan(6.5);
    expect(a.value!).toBeLessThan(8.5);
    expect(b.flagged).toBe(false);
    expect(Math.abs(b.value!)).toBeLessThan(1);
  });
});
