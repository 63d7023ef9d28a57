/**
 * The simulated spectra match what was planted, checked with an outside reference: python3's
 * scipy.signal.welch (scipy 1.17), numpy.polyfit and scipy.optimize.curve_fit on the generated
 * samples. Sizes: 10 min of one stage at 256 Hz (20 epochs, 299 Welch segments of 4 s) per case;
 * one python run per case group, to keep the suite quick.
 */
import { describe, expect, it } from 'vitest';
import { planNight } from '../../src/core/simulate/index.ts';
import { runPython } from '../helpers/python.ts';
import { baseScenario, fixedStages, generateNight } from './scenarios.ts';

const WELCH = `
from scipy.signal import welch
def psd(x):
    return welch(x, fs=256, nperseg=1024)  # Hann, 50 % overlap, constant detrend, density (scipy defaults)
`;

describe('aperiodic background (10 min of N2, no rhythms)', () => {
  const scenario = baseScenario(fixedStages('N2', 20));
  const plan = planNight(scenario, 0);
  const night = generateNight(scenario);
  const channels = ['Cz', 'O1', 'M1', 'F3', 'Pz'];
  const arrays = Object.fromEntries(channels.map((ch) => [ch, night.data[night.channels.indexOf(ch)]]));
  const truth = plan.truth.aperiodic.N2;
  const result = runPython<{ fits: Record<string, [number, number]>; meanLogRatio: number; worst: number }>(
    `${WELCH}
fits = {}
for ch in ${JSON.stringify(channels)}:
    f, p = psd(numpy.fromfile(inputs[ch]))
    m = (f >= 2) & (f <= 40)
    fits[ch] = numpy.polyfit(numpy.log10(f[m]), numpy.log10(p[m]), 1).tolist()
f, p = psd(numpy.fromfile(inputs['Pz']))
m = (f >= 1) & (f <= 120)
model = ${truth.Pz.offset} - numpy.log10(${truth.Pz.knee} + f[m] ** ${truth.Pz.exponent})
d = numpy.log10(p[m]) - model
print(json.dumps({'fits': fits, 'meanLogRatio': float(d.mean()), 'worst': float(numpy.abs(d).max())}))`,
    arrays,
  );

  it.each(channels.slice(0, 4))('a log-log line over 2–40 Hz of %s recovers the planted offset and exponent within ±0.05', (ch) => {
    const [slope, intercept] = result.fits[ch];
    // L(f) = b − χ·log10 f for k = 0: slope −χ, intercept b (log10 µV²/Hz at 1 Hz)
    expect(Math.abs(-slope - truth[ch].exponent)).toBeLessThan(0.05);
    expect(Math.abs(intercept - truth[ch].offset)).toBeLessThan(0.05);
  });

  it('the Welch density equals the planted density 10^L(f) over 1–120 Hz (the synthesis scaling)', () => {
    // 477 bins, each an average of 299 half-overlapping segments (SD of log10 about 0.035 per bin)
    expect(Math.abs(result.meanLogRatio)).toBeLessThan(0.01);
    expect(result.worst).toBeLessThan(0.15);
  });

  it('the channels differ as planted (volume conduction and the reference give each its own offset)', () => {
    expect(truth.M1.offset).toBeLessThan(truth.Pz.offset - 0.1);
    expect(result.fits.Pz[1] - result.fits.M1[1]).toBeGreaterThan(0.1);
  });
});

describe('aperiodic background with a knee (10 min of N3)', () => {
  it('scipy.optimize.curve_fit of b − log10(k + f^χ) over 1–40 Hz recovers b and χ within ±0.05 and the knee frequency within 10 %', () => {
    const base = baseScenario();
    const scenario = baseScenario({ ...fixedStages('N3', 20), aperiodic: { ...base.aperiodic, N3: { offset: 2.6, exponent: 2.5, knee: 20 } } });
    const plan = planNight(scenario, 0);
    const night = generateNight(scenario);
    const truth = plan.truth.aperiodic.N3.C3;
    const [b, k, chi] = runPython<[number, number, number]>(
      `${WELCH}
from scipy.optimize import curve_fit
f, p = psd(numpy.fromfile(inputs['x']))
m = (f >= 1) & (f <= 40)
model = lambda f, b, k, chi: b - numpy.log10(k + f ** chi)
popt, _ = curve_fit(model, f[m], numpy.log10(p[m]), p0=[2, 5, 2], bounds=([-5, 0, 0], [10, 1000, 6]))
print(json.dumps(popt.tolist()))`,
      { x: night.data[night.channels.indexOf('C3')] },
    );
    expect(Math.abs(b - truth.offset)).toBeLessThan(0.05);
    expect(Math.abs(chi - truth.exponent)).toBeLessThan(0.05);
    // knee frequency k^(1/χ), Hz
    expect(Math.abs(Math.pow(k, 1 / chi) / Math.pow(truth.knee, 1 / truth.exponent) - 1)).toBeLessThan(0.1);
  });
});

describe('spindle peaks (10 min of N2 with slow and fast spindle bursts)', () => {
  const scenario = baseScenario({
    ...fixedStages('N2', 20),
    rhythms: [
      {
        name: 'slow-spindle',
        kind: 'bursts',
        site: 'Fz',
        widthDeg: 35,
        centerHz: 11,
        amplitudeUv: 13,
        durationS: [0.5, 2],
        burstFrequencySdHz: 0.3,
        perMinute: { N2: 4 },
      },
      {
        name: 'fast-spindle',
        kind: 'bursts',
        site: 'CPz',
        widthDeg: 40,
        centerHz: 13.5,
        amplitudeUv: 15,
        durationS: [0.5, 2],
        burstFrequencySdHz: 0.3,
        perMinute: { N2: 5 },
      },
    ],
  });
  const plan = planNight(scenario, 0);
  const night = generateNight(scenario);
  const channels = ['Pz', 'Cz', 'C3', 'Fz'];
  // per channel: frequency of the largest residual (log10 Welch density minus a log-log line
  // fitted over 2–40 Hz) in 8–17 Hz, and the residual's value there
  const peaks = runPython<Record<string, [number, number]>>(
    `${WELCH}
out = {}
for ch in ${JSON.stringify(channels)}:
    f, p = psd(numpy.fromfile(inputs[ch]))
    m = (f >= 2) & (f <= 40)
    c = numpy.polyfit(numpy.log10(f[m]), numpy.log10(p[m]), 1)
    res = numpy.log10(p[1:]) - numpy.polyval(c, numpy.log10(f[1:]))
    band = (f[1:] >= 8) & (f[1:] <= 17)
    i = numpy.argmax(res[band])
    out[ch] = [float(f[1:][band][i]), float(res[band][i])]
print(json.dumps(out))`,
    Object.fromEntries(channels.map((ch) => [ch, night.data[night.channels.indexOf(ch)]])),
  );

  it.each(['Pz', 'Cz', 'C3'])('the fast spindle shows in %s at 13.5 ± 0.5 Hz', (ch) => {
    expect(Math.abs(peaks[ch][0] - 13.5)).toBeLessThanOrEqual(0.5);
  });

  it('the slow spindle shows in Fz at 11 ± 0.5 Hz', () => {
    expect(Math.abs(peaks.Fz[0] - 11)).toBeLessThanOrEqual(0.5);
  });

  it('the residual peak height is of the size the ground truth states (within 0.25 log10)', () => {
    // the truth height is log10(1 + burst density / aperiodic density) at the centre; Welch's
    // 0.25-Hz smoothing and the fitted line (lifted by the peak itself) lower it a little
    const truthPz = plan.truth.peaks.N2.Pz.find((p) => p.rhythm === 'fast-spindle')!;
    expect(truthPz.heightLog10).toBeGreaterThan(0.3);
    expect(Math.abs(peaks.Pz[1] - truthPz.heightLog10)).toBeLessThan(0.25);
  });
});
