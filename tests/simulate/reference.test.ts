/**
 * Re-referencing changes the spectra as the physics says. The check: recordings against a
 * vertex-near reference FCz, with a 6-Hz rhythm from a source at Fz (σ = 30°), 22.5° from the
 * reference. As recorded, Fz − FCz cancels most of that rhythm (gain 1 − e^{−(22.5/30)²/2} ≈ 0.25);
 * against linked mastoids (Fz − (M1 + M2)/2, far from the source) it comes back with gain ≈ 1,
 * so its power rises about 13-fold. Outside reference: scipy.signal.welch (scipy 1.17) of both
 * derivations, against the analytic densities of the planted model (truth.ts). Size: 10 min of
 * N2 at 256 Hz.
 */
import { describe, expect, it } from 'vitest';
import { expectedDensity, planNight } from '../../src/core/simulate/index.ts';
import { runPython } from '../helpers/python.ts';
import { baseScenario, fixedStages, generateNight } from './scenarios.ts';

describe('reference', () => {
  const scenario = baseScenario({
    ...fixedStages('N2', 20),
    reference: { label: 'REF', site: 'FCz' },
    rhythms: [{ name: 'theta', kind: 'narrowband', site: 'Fz', widthDeg: 30, centerHz: 6, bandwidthHz: 0.5, rmsUv: { N2: 10 } }],
  });
  const plan = planNight(scenario, 0);
  const night = generateNight(scenario);
  const ch = (name: string): Float64Array => night.data[night.channels.indexOf(name)];
  const linked = ch('Fz').map((v, i) => v - 0.5 * (ch('M1')[i] + ch('M2')[i]));
  const freqs = [6, 25];
  const welchAt = runPython<{ recorded: number[]; linked: number[] }>(
    `from scipy.signal import welch
out = {}
for name in ['recorded', 'linked']:
    f, p = welch(numpy.fromfile(inputs[name]), fs=256, nperseg=1024)
    out[name] = [float(p[numpy.argmin(numpy.abs(f - q))]) for q in ${JSON.stringify(freqs)}]
print(json.dumps(out))`,
    { recorded: ch('Fz'), linked },
  );
  const alphaRecorded = plan.channels.map((c) => (c === 'Fz' ? 1 : 0));
  const alphaLinked = plan.channels.map((c) => (c === 'Fz' ? 1 : c === 'M1' || c === 'M2' ? -0.5 : 0));
  const expRecorded = expectedDensity(plan, 'N2', alphaRecorded, freqs);
  const expLinked = expectedDensity(plan, 'N2', alphaLinked, freqs);

  it('the rhythm near the reference is weak as recorded and strong against linked mastoids (×5 at least)', () => {
    expect(welchAt.linked[0] / welchAt.recorded[0]).toBeGreaterThan(5);
    expect(expLinked[0] / expRecorded[0]).toBeGreaterThan(5);
  });

  it.each([0, 1])('scipy Welch of both derivations matches the analytic density at %s (6 Hz rhythm, 25 Hz background) within 25 %', (i) => {
    // one Welch bin from 299 half-overlapping segments: relative SD about 8 %
    expect(Math.abs(welchAt.recorded[i] / expRecorded[i] - 1)).toBeLessThan(0.25);
    expect(Math.abs(welchAt.linked[i] / expLinked[i] - 1)).toBeLessThan(0.25);
  });
});
