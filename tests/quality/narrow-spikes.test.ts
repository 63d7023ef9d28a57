/**
 * Narrow spikes vs physiological peaks, on closed-form spectra (0.25-Hz grid to 45 Hz, the
 * stored range) and on Welch spectra of seeded signals:
 *  - a line at 23 Hz shaped like a bin-centred sinusoid through a Hann window (peak L,
 *    neighbours L/4 — |W(±1 bin)|² = 1/4, a textbook property of the Hann window) is flagged;
 *  - a 10 µV sinusoid at 23.1 Hz (between bins) in white noise, through Welch, is flagged near 23.1 Hz;
 *  - spindle-like Gaussian peaks in log power (the model of Donoghue et al. 2020, via
 *    src/core/spectrum/aperiodic-model.ts) 1.5 Hz wide — as 2σ and as full width at half
 *    maximum — are NOT flagged, nor is a 2-Hz-wide alpha peak; the same Gaussian at σ = 0.1 Hz is.
 */
import { describe, expect, it } from 'vitest';
import { findNarrowSpikes, narrowSpikes } from '../../src/core/quality/narrow-spikes.ts';
import { modelLog10 } from '../../src/core/spectrum/aperiodic-model.ts';
import { welch } from '../../src/core/spectrum/welch.ts';
import { Random } from '../../src/core/stats/random.ts';

const STEP = 0.25;
const freqs = Float64Array.from({ length: 181 }, (_, k) => k * STEP);
const aperiodic = { offset: 2, exponent: 1.5, knee: 0 };
const cell = { channel: 'Cz', stage: 'N2' as const };

function spectrum(peaks: { centerHz: number; height: number; widthHz: number }[]): Float64Array {
  const f = Float64Array.from(freqs, (x) => Math.max(x, STEP));
  return Float64Array.from(modelLog10(f, aperiodic, peaks), (v) => Math.pow(10, v));
}

describe('narrow spikes', () => {
  it('a Hann-shaped line at 23 Hz is flagged, the reason naming 23 Hz', () => {
    const p = spectrum([]);
    const k = 23 / STEP;
    const L = 9 * p[k];
    p[k] += L;
    p[k - 1] += L / 4;
    p[k + 1] += L / 4;
    const row = narrowSpikes(cell, freqs, p);
    expect(row.flagged).toBe(true);
    expect(row.reason).toMatch(/^narrow spike at 23\.00 Hz/);
    expect(row.spikes).toHaveLength(1);
    // excess = log10(P_k / M_k), M_k ≈ the power law near 23 Hz: log10(10) = 1 within the power law's slope over ±2 Hz
    expect(row.value!).toBeGreaterThan(0.95);
    expect(row.value!).toBeLessThan(1.05);
    expect(row.spikes[0].widthHz).toBeLessThan(0.75);
  });

  it('a sinusoid at 23.1 Hz (between bins) in white noise, through Welch, is flagged near 23.1 Hz', () => {
    // Size: 120 s at 256 Hz, 4-s segments, 50 % overlap; noise SD 5 µV, sinusoid 10 µV.
    const fs = 256;
    const rng = new Random(11);
    const x = Float64Array.from({ length: 120 * fs }, (_, i) => 5 * rng.normal() + 10 * Math.sin((2 * Math.PI * 23.1 * i) / fs));
    const w = welch(x, fs, { segmentS: 4, maxFreqHz: 45 });
    const row = narrowSpikes(cell, w.freqsHz, w.psd);
    expect(row.flagged).toBe(true);
    expect(row.spikes).toHaveLength(1);
    expect(Math.abs(row.spikes[0].freqHz - 23.1)).toBeLessThanOrEqual(0.125);
    const noiseOnly = welch(
      Float64Array.from({ length: 120 * fs }, () => 5 * rng.normal()),
      fs,
      { segmentS: 4, maxFreqHz: 45 },
    );
    expect(narrowSpikes(cell, noiseOnly.freqsHz, noiseOnly.psd).flagged).toBe(false);
  });

  it('spindle-like Gaussian peaks 1.5 Hz wide and an alpha peak are not flagged', () => {
    for (const widthHz of [0.75, 1.5 / 2.3548]) {
      for (const height of [0.5, 1.0, 1.5]) {
        const row = narrowSpikes(cell, freqs, spectrum([{ centerHz: 13, height, widthHz }]));
        expect(row.flagged, `σ ${widthHz}, h ${height}`).toBe(false);
        expect(row.value).toBe(0);
      }
    }
    expect(narrowSpikes(cell, freqs, spectrum([{ centerHz: 10, height: 0.8, widthHz: 1 }])).flagged).toBe(false);
  });

  it('the same Gaussian at σ = 0.1 Hz is flagged (the width rule, not the height, decides)', () => {
    const row = narrowSpikes(cell, freqs, spectrum([{ centerHz: 13, height: 1.0, widthHz: 0.1 }]));
    expect(row.flagged).toBe(true);
    expect(row.reason).toMatch(/13\.00 Hz/);
  });

  it('excluded ranges and spectrum edges are not searched', () => {
    const p = spectrum([]);
    const k = 23 / STEP;
    p[k] *= 20;
    expect(findNarrowSpikes(freqs, p, { heightLog10: 0.5, maxWidthHz: 0.75, neighbourhoodHz: 2, fminHz: 2, fmaxHz: Infinity, excludeHz: [[22, 24]] })).toEqual(
      [],
    );
    const q = spectrum([]);
    q[180 - 2] *= 20; // 44.5 Hz: its ±2 Hz neighbourhood leaves the spectrum
    expect(findNarrowSpikes(freqs, q)).toEqual([]);
  });
});
