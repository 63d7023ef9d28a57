// Scalp maps follow the chosen measure (spectra-data.ts bandMap): per channel and group the mean
// over subjects of log10 band power (mean density), log10 relative band power (trapezoid integrals),
// the residual over the band, or an aperiodic parameter; checked against numpy (numpy.trapezoid,
// numpy.log10, numpy.mean) on the same invented spectra: 4 subjects × 2 channels, 0–40 Hz in 0.5-Hz bins.
import { describe, expect, it } from 'vitest';
import { bandMap, mapMeasureOf, type SpectraRows } from '../../src/dashboard/views/spectra/spectra-data.ts';
import { runPython } from '../helpers/python.ts';

const N_BINS = 81;
const subjects = ['s1', 's2', 's3', 's4'];
const channels = ['Cz', 'C3'];
const spectrum = (k: number) =>
  Float32Array.from({ length: N_BINS }, (_, i) => 10 * (1 + k) * (1 + 0.5 * i) ** -(1 + 0.1 * k) + (i >= 22 && i <= 30 ? 0.5 * k : 0));
const rows: SpectraRows = {
  runId: 'r',
  stage: 'N2',
  reference: 'recorded',
  freqStartHz: 0,
  freqStepHz: 0.5,
  nBins: N_BINS,
  rows: subjects.flatMap((subject, s) =>
    channels.map((channel, c) => ({
      subject,
      session: null,
      channel,
      stage: 'N2' as const,
      nEpochs: 100,
      flagged: false,
      flagReason: null,
      power: spectrum(s + 2 * c),
    })),
  ),
  aperiodic: subjects.flatMap((subject, s) =>
    channels.map((channel, c) => ({ subject, session: null, channel, stage: 'N2' as const, offset: 1 + 0.1 * s + c, exponent: 1 + 0.05 * s, knee: 0 })),
  ),
  participants: subjects.map((subject, s) => ({ subject, group: s < 2 ? 'control' : 'patient' })),
  channels,
};
const sigma = { name: 'sigma', loHz: 11, hiHz: 15 };
const options = { groupColumn: 'group', band: sigma, relativeRangeHz: [0.5, 35] as [number, number], exclusions: [] };

describe('scalp maps follow the measure', () => {
  it('maps band power, relative band power and aperiodic parameters as numpy computes them', () => {
    const power = rows.rows.map((r) => Array.from(r.power));
    const ref = runPython<Record<string, number[][]>>(
      `P = numpy.array(${JSON.stringify(power)}).reshape(4, 2, ${N_BINS})\nf = numpy.arange(${N_BINS}) * 0.5\n` +
        'band = (f >= 11) & (f <= 15)\nrng = (f >= 0.5) & (f <= 35)\n' +
        'bp = numpy.log10(P[:, :, band].mean(axis=2))\n' +
        'rel = numpy.log10(numpy.trapezoid(P[:, :, band], f[band], axis=2) / numpy.trapezoid(P[:, :, rng], f[rng], axis=2))\n' +
        'off = numpy.array([[1 + 0.1 * s + c for c in range(2)] for s in range(4)])\n' +
        'g = lambda a: [a[:2].mean(axis=0).tolist(), a[2:].mean(axis=0).tolist()]\n' +
        "print(json.dumps({'band-power': g(bp), 'relative-band-power': g(rel), 'offset': g(off)}))",
    );
    for (const map of ['band-power', 'relative-band-power', 'offset'] as const) {
      const m = bandMap(rows, { ...options, map });
      expect(m.groups.map((g) => g.group)).toEqual(['control', 'patient']);
      m.groups.forEach((g, i) => g.values.forEach((v, c) => expect(v, `${map} ${g.group} ${channels[c]}`).toBeCloseTo(ref[map][i][c], 5)));
    }
  });

  it('follows the spectrum measure by default: relative PSD maps relative band power, the residual the residual', () => {
    expect(mapMeasureOf('absolute')).toBe('band-power');
    expect(mapMeasureOf('log10')).toBe('band-power');
    expect(mapMeasureOf('relative')).toBe('relative-band-power');
    expect(mapMeasureOf('residual')).toBe('residual');
    // residual with knee 0: log10 P − (offset − exponent·log10 f), averaged over the band's bins
    const r = bandMap(rows, { ...options, map: 'residual' });
    const f = Array.from({ length: 9 }, (_, i) => 11 + 0.5 * i);
    const expected = (s: number, c: number) =>
      f.reduce((a, fr) => a + Math.log10(rows.rows[2 * s + c].power[fr * 2]) - (1 + 0.1 * s + c - (1 + 0.05 * s) * Math.log10(fr)), 0) / f.length;
    expect(r.groups[0].values[1]).toBeCloseTo((expected(0, 1) + expected(1, 1)) / 2, 6);
  });
});
