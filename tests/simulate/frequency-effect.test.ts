/**
 * The scenario's peak-frequency effect (`rhythm-frequency`: a group's rhythm centre moved by
 * shiftHz): the scenario file accepts it and refuses bad values with the field named, the plan
 * moves exactly the named group's centre of the named rhythm, and the generated samples carry
 * the peak where it was moved to, checked with an outside reference: python3's
 * scipy.signal.welch and numpy.polyfit on the generated samples (the residual's largest value in
 * 8–17 Hz, as tests/simulate/spectra.test.ts). Size: 10 min of N2 at 256 Hz per subject, one
 * subject per group, one python run.
 */
import { describe, expect, it } from 'vitest';
import { planNight, type Scenario } from '../../src/core/simulate/index.ts';
import { parseScenario, ScenarioFileError } from '../../src/simulation/scenario-schema.ts';
import { runPython } from '../helpers/python.ts';
import { baseScenario, fixedStages, generateNight } from './scenarios.ts';

const covariates = { ageMean: 40, ageSd: 10, femaleFraction: 0.5, scoreMean: 10, scoreSd: 3 };
const fastSpindle = {
  name: 'fast-spindle',
  kind: 'bursts',
  site: 'CPz',
  widthDeg: 40,
  centerHz: 13.5,
  amplitudeUv: 15,
  durationS: [0.5, 2],
  burstFrequencySdHz: 0.3,
  perMinute: { N2: 5 },
} as const;

function scenario(effects: Scenario['effects'], frequencySd = 0): Scenario {
  const base = baseScenario();
  return baseScenario({
    ...fixedStages('N2', 20),
    rhythms: [{ ...fastSpindle, durationS: [0.5, 2], perMinute: { N2: 5 } }],
    variability: { ...base.variability, rhythmFrequencySdFraction: frequencySd },
    groups: [
      { name: 'control', codePrefix: 'ctl', size: 1, fsHz: 256, covariates },
      { name: 'patient', codePrefix: 'pat', size: 1, fsHz: 256, covariates },
    ],
    effects,
  });
}

const shifted: Scenario['effects'] = [{ kind: 'rhythm-frequency', group: 'patient', rhythm: 'fast-spindle', shiftHz: -1 }];

describe('scenario effect rhythm-frequency', () => {
  it('the scenario file accepts it; an unknown rhythm, a centre at or below 0 Hz or a missing shift is refused with the field named', () => {
    const json = JSON.parse(JSON.stringify(scenario(shifted)));
    expect(parseScenario(json, 'shift.json').effects).toEqual(shifted);
    const bad = (effect: unknown) => () => parseScenario({ ...json, effects: [effect] }, 'shift.json');
    expect(bad({ ...shifted[0], rhythm: 'gamma' })).toThrow(/shift\.json[\s\S]*effects\[0\]\.rhythm.*gamma.*no such rhythm/);
    expect(bad({ ...shifted[0], shiftHz: -13.5 })).toThrow(/effects\[0\]\.shiftHz.*-13\.5.*must be > 0 Hz/);
    expect(bad({ kind: 'rhythm-frequency', group: 'patient', rhythm: 'fast-spindle' })).toThrow(ScenarioFileError);
    expect(bad({ kind: 'rhythm-frequency', group: 'patient', rhythm: 'fast-spindle' })).toThrow(/effects\.0\.shiftHz/);
  });

  it('moves the named group’s centre by shiftHz after its own spread; the other group, amplitude and truth follow', () => {
    // with a between-subject spread, so the shift is added to each subject's own centre
    const without = scenario([], 0.025);
    const withShift = scenario(shifted, 0.025);
    const [ctl0, pat0] = [planNight(without, 0), planNight(without, 1)];
    const [ctl1, pat1] = [planNight(withShift, 0), planNight(withShift, 1)];
    expect(ctl1.rhythms[0].centerHz).toBe(ctl0.rhythms[0].centerHz);
    expect(pat1.rhythms[0].centerHz).toBeCloseTo(pat0.rhythms[0].centerHz - 1, 12);
    expect(pat1.rhythms[0].amplitudeUv).toEqual(pat0.rhythms[0].amplitudeUv);
    expect(pat1.truth.peaks.N2.Pz[0].centerHz).toBeCloseTo(pat0.truth.peaks.N2.Pz[0].centerHz - 1, 3);
  });

  it('the generated patient’s spindle peak sits 1 Hz lower than the control’s (scipy Welch, ±0.5 Hz: two 0.25-Hz bins and the burst frequency spread)', () => {
    const s = scenario(shifted);
    const nights = [generateNight(s, 0), generateNight(s, 1)];
    const inputs = Object.fromEntries(nights.map((n, i) => [`s${i}`, n.data[n.channels.indexOf('Pz')]]));
    const peaks = runPython<number[]>(
      `from scipy.signal import welch
out = []
for k in ['s0', 's1']:
    f, p = welch(numpy.fromfile(inputs[k]), fs=256, nperseg=1024)  # Hann, 50 % overlap (scipy defaults)
    m = (f >= 2) & (f <= 40)
    c = numpy.polyfit(numpy.log10(f[m]), numpy.log10(p[m]), 1)
    res = numpy.log10(p[1:]) - numpy.polyval(c, numpy.log10(f[1:]))
    band = (f[1:] >= 8) & (f[1:] <= 17)
    out.append(float(f[1:][band][numpy.argmax(res[band])]))
print(json.dumps(out))`,
      inputs,
    );
    expect(Math.abs(peaks[0] - 13.5)).toBeLessThanOrEqual(0.5);
    expect(Math.abs(peaks[1] - 12.5)).toBeLessThanOrEqual(0.5);
  });
});
