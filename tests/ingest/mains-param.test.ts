// The mains lines as a run parameter (quality.mainsHz, quality.mainsHalfWidthHz): which lines the
// narrow-spike search leaves out and which line the mains-hum metric assesses.
import { describe, expect, it } from 'vitest';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import type { Selected } from '../../ingest/pipeline/channels.ts';
import { resolveIngestParams } from '../../ingest/pipeline/params.ts';
import { recordingQuality, type ChannelMeasures } from '../../ingest/pipeline/recording-quality.ts';

const STEP = 0.25;
const rec: CohortRecording = { row: 1, subject: 's1', session: null, group: null, recordingPath: 'r.edf', scoringPath: null, covariates: {} };
const selected = [{ name: 'C3', signal: { fsHz: 256 } }] as unknown as Selected[];

/** A 1/f spectrum 0–70 Hz (µV²/Hz) with a one-bin line 100× its neighbours at each of lines (Hz). */
function spectrumWith(lines: number[]): ChannelMeasures {
  const n = Math.round(70 / STEP) + 1;
  const p = new Float32Array(n);
  for (let k = 0; k < n; k++) p[k] = 100 / Math.max(1, k * STEP);
  for (const f of lines) p[Math.round(f / STEP)] *= 100;
  return { channel: 'C3', clippingFraction: 0, medianSdUv: 20, fullSpectrum: p, fullStepHz: STEP };
}

const rowsOf = (m: ChannelMeasures, quality: object) =>
  recordingQuality([m], selected, rec, resolveIngestParams({ quality: { ...resolveIngestParams().quality, ...quality } }), 100, 30);

describe('mains lines as a parameter', () => {
  it('by default leaves 50 and 60 Hz ± 2 Hz out of the narrow-spike search, and finds a line elsewhere', () => {
    const spike = (r: ReturnType<typeof rowsOf>) => r.find((x) => x.metric === 'narrow-spike')!;
    expect(spike(rowsOf(spectrumWith([50, 60]), {})).flagged).toBe(false);
    // a line 2.5 Hz from the mains line is outside the ±2 Hz exclusion: found (planted at 62.5 Hz)
    const near = spike(rowsOf(spectrumWith([62.5]), {}));
    expect(near.flagged).toBe(true);
    expect(near.reason).toMatch(/62\.50 Hz/);
  });

  it('with one mains frequency, the other line is searched and the metric assesses the given line', () => {
    const rows = rowsOf(spectrumWith([50, 60]), { mainsHz: [50] });
    expect(rows.find((x) => x.metric === 'narrow-spike')!.reason).toMatch(/60\.00 Hz/);
    const hum = rows.find((x) => x.metric === 'mains-hum')!;
    // the line bin is 100× a 1/f background: 10·log10 of the ±1-Hz mean over the 3–8 Hz mean, well above 6 dB
    expect(hum.flagged).toBe(true);
  });

  it('a wider half-width leaves a nearby line out too', () => {
    const rows = rowsOf(spectrumWith([62.5]), { mainsHalfWidthHz: 3 });
    expect(rows.find((x) => x.metric === 'narrow-spike')!.flagged).toBe(false);
  });

  it('refuses mains frequencies other than 50 and 60 Hz and a non-positive half-width', () => {
    expect(() => resolveIngestParams({ quality: { ...resolveIngestParams().quality, mainsHz: [55 as 50] } })).toThrow(
      /mains frequencies must be 50, 60 or both, got \[55\]/,
    );
    expect(() => resolveIngestParams({ quality: { ...resolveIngestParams().quality, mainsHz: [] } })).toThrow(/got \[\]/);
    expect(() => resolveIngestParams({ quality: { ...resolveIngestParams().quality, mainsHalfWidthHz: 0 } })).toThrow(/half-width must be positive, got 0 Hz/);
  });
});
