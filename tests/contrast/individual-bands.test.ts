/**
 * Individual bands (src/core/contrast/individual-bands.ts): the rule on hand-made peaks (worked
 * by hand), the centres found on a simulated cohort against the centres planted in it
 * (tests/verdict/cohorts.ts), and each subject's band power against numpy over the same band.
 */
import { describe, expect, it } from 'vitest';
import { individualBand, individualBands } from '../../src/core/contrast/individual-bands.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { assembleContrast } from '../../src/core/contrast/assemble.ts';
import { compare } from '../../src/core/contrast/run.ts';
import type { PeakRow } from '../../src/core/contrast/data.ts';
import { runPython } from '../helpers/python.ts';
import { plantedCentres, simulateCohort } from '../verdict/cohorts.ts';

const fast = { name: 'fast', loHz: 12, hiHz: 15 };
const who = { subject: 's1', condition: 'N2', stage: 'N2' as const };
const peak = (channel: string, centerHz: number, height: number): PeakRow => ({
  subject: 's1',
  session: null,
  channel,
  stage: 'N2',
  centerHz,
  height,
  bandwidthHz: 1,
});

describe('individual band rule', () => {
  it("centres the band on the median over channels of each channel's highest peak in the search range", () => {
    // C3: highest inside 11–16 Hz is 12.5 (17 Hz is outside); C4: 13.0; Cz: 14.0; Pz: none → median 13.0 (by hand)
    const peaks = [peak('C3', 12.5, 0.3), peak('C3', 14.8, 0.2), peak('C3', 17, 0.9), peak('C4', 13.0, 0.4), peak('Cz', 14.0, 0.1), peak('O1', 13.9, 0.5)];
    const r = individualBand(fast, { searchHz: [11, 16], halfWidthHz: 1.5 }, peaks, ['C3', 'C4', 'Cz', 'Pz'], who);
    expect(r.centre.centerHz).toBe(13);
    expect(r.centre.channelsWithPeak).toBe(3);
    expect(r.band).toEqual({ name: 'fast', loHz: 11.5, hiHz: 14.5 });
    expect(r.centre.note).toBeNull();
  });

  it('keeps the fixed band, with a note, when no channel has a peak in the search range', () => {
    const r = individualBand(fast, { searchHz: [11, 16], halfWidthHz: 1.5 }, [peak('C3', 9.5, 0.6)], ['C3'], who);
    expect(r.band).toBe(fast);
    expect(r.centre.centerHz).toBeNull();
    expect(r.centre.note).toMatch(/no fitted peak in 11–16 Hz.*fixed band 12–15 Hz/);
  });
});

describe('individual bands on a simulated cohort (fast spindles 1 Hz slower in patients)', () => {
  const data = simulateCohort('shift-1hz', 1);
  const planted = plantedCentres('shift-1hz', 1);
  // search 11.8–16 Hz: above the slow spindle (11 Hz ± 2.5 %), around the fast one (13.5 Hz, patients 12.5 Hz)
  const contrast = parseContrast({
    design: 'groups',
    groups: ['control', 'patient'],
    stage: 'N2',
    channels: ['Cz'],
    measure: 'band-power',
    bands: [fast],
    bandMethod: 'integral',
    bandDefinition: 'individual',
    peakSearchHz: [11.8, 16],
    halfWidthHz: 1,
    permutations: 200,
    seed: 3,
  });

  it("finds each subject's planted fast-spindle centre", () => {
    const found = individualBands(contrast, data, fast).centres;
    expect(found.length).toBe(40);
    const withPeak = found.filter((c) => c.centerHz !== null);
    expect(withPeak.length).toBeGreaterThanOrEqual(36);
    const errors = withPeak.map((c) => Math.abs(c.centerHz! - planted.get(c.subject)!)).sort((a, b) => a - b);
    // the fitted peak of one simulated spectrum (0.25-Hz bins, multiplicative noise): median error under one bin
    expect(errors[Math.floor(errors.length / 2)]).toBeLessThan(0.25);
    for (const c of withPeak) expect([c.loHz, c.hiHz]).toEqual([c.centerHz! - 1, c.centerHz! + 1]);
  });

  it("takes each subject's band power over its own band, equal to numpy's trapezoid over those bins", () => {
    const a = assembleContrast(contrast, data);
    const centres = new Map(a.individualCentres.map((c) => [c.subject, c]));
    const axis = data.spectra;
    const freqs = Array.from({ length: axis.nBins }, (_, k) => axis.freqStartHz + k * axis.freqStepHz);
    const subjects = a.subjects.map((s) => s.subject);
    const spectra = subjects.flatMap((s) => Array.from(data.spectra.rows.find((r) => r.subject === s)!.power));
    const edges = subjects.flatMap((s) => [centres.get(s)!.loHz, centres.get(s)!.hiHz]);
    const expected = runPython<number[]>(
      `f = numpy.array(${JSON.stringify(freqs)})
p = numpy.fromfile(inputs['p']).reshape(-1, len(f)).astype(numpy.float32).astype(float)
e = numpy.fromfile(inputs['e']).reshape(-1, 2)
out = []
for row, (lo, hi) in zip(p, e):
    m = (f >= lo - 1e-9) & (f <= hi + 1e-9)
    out.append(float(numpy.log10(numpy.trapezoid(row[m], f[m]))))
print(json.dumps(out))`,
      { p: spectra, e: edges },
    );
    expect(a.subjects.length).toBe(40);
    for (let i = 0; i < subjects.length; i++) expect(a.input.data[i]).toBeCloseTo(expected[i], 9);
  });

  it("lists every analysed subject's centre in the result, and refuses a measure individual bands do not apply to", () => {
    const r = compare(contrast, data);
    expect(r.individualCentres?.length).toBe(40);
    expect(() => compare(parseContrast({ ...contrast, measure: 'log-psd' }), data)).toThrow(
      /individual bands apply to the measures band-power and relative-band-power/,
    );
  });
});
