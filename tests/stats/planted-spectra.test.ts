import { describe, expect, it } from 'vitest';
import { runPermutationTest } from '../../src/core/stats/index.ts';
import { simulateSpectrum } from '../../src/core/simulate/index.ts';
import { Random } from '../../src/core/stats/random.ts';
import { aperiodicLog10 } from '../../src/core/spectrum/aperiodic-model.ts';

// A planted fast-spindle reduction in simulated spectra (src/core/simulate: aperiodic + Gaussian
// peak model with the noise of a 60-segment Welch average). 20 controls and 20 patients × 8
// channels × 1–30 Hz in 0.5-Hz bins; per subject a random offset (sd 0.2 log10 units, shared by
// all channels), exponent (sd 0.15) and peak height (sd 0.08); patients' 13-Hz peak is 0.2 log10
// units lower at C3, Cz and C4 only. Measure: the residual spectrum, log10 PSD minus the
// subject's aperiodic component (here the simulated one, standing in for the fit), which removes
// the broadband offset/exponent differences that would otherwise dominate the cluster null.
// Residual sd at 13 Hz ≈ √(0.08² + 0.05²) = 0.094, so the expected t there is about
// 0.2/(0.094·√(2/20)) ≈ 6.7: a clear effect, as the test is of localisation, not of power.
// Welch t, cluster mass, 1000 permutations.
const channels = ['F3', 'Fz', 'F4', 'C3', 'Cz', 'C4', 'P3', 'P4'];
const planted = ['C3', 'Cz', 'C4'];
const freqsHz = Array.from({ length: 59 }, (_, i) => 1 + 0.5 * i);

describe('planted effect in simulated spectra', () => {
  it('comes out as one significant negative cluster over the planted channels in the sigma range', () => {
    const rng = new Random(1301);
    const n = 40;
    const F = freqsHz.length;
    const P = channels.length * F;
    const data = new Float64Array(n * P);
    for (let s = 0; s < n; s++) {
      const patient = s >= 20;
      const offset = 1.5 + 0.2 * rng.normal();
      const exponent = 1.8 + 0.15 * rng.normal();
      const height = 0.5 + 0.08 * rng.normal();
      channels.forEach((ch, c) => {
        const drop = patient && planted.includes(ch) ? 0.2 : 0;
        const aperiodic = { offset, exponent, knee: 0 };
        const psd = simulateSpectrum({ aperiodic, peaks: [{ centerHz: 13, height: height - drop, widthHz: 1.2 }] }, freqsHz, 60, rng);
        for (let f = 0; f < F; f++) data[s * P + c * F + f] = Math.log10(psd[f]) - aperiodicLog10(freqsHz[f], aperiodic);
      });
    }
    const group = Array.from({ length: n }, (_, s) => (s < 20 ? 0 : 1));
    const r = runPermutationTest(
      { channels, freqsHz, data, design: { kind: 'groups', group, groupNames: ['control', 'patient'] } },
      { permutations: 1000, seed: 3 },
    );
    const significant = r.clusters.filter((c) => c.p <= 0.05);
    console.log(
      `simulated spindle reduction: ${significant.map((c) => `sign ${c.sign}, p ${c.p.toFixed(4)}, ${c.fminHz}–${c.fmaxHz} Hz, ${c.channels.join(',')}`).join('; ')}`,
    );
    expect(significant.length).toBe(1);
    const best = significant[0];
    expect(best.sign).toBe(-1); // patients − controls
    expect([...best.channels].sort()).toEqual([...planted].sort());
    expect(best.fminHz).toBeGreaterThanOrEqual(10);
    expect(best.fmaxHz).toBeLessThanOrEqual(16);
    expect(best.fminHz).toBeLessThanOrEqual(12.5);
    expect(best.fmaxHz).toBeGreaterThanOrEqual(13.5);
    // Hedges' g at 13 Hz over C3 is clearly negative
    const idx = channels.indexOf('C3') * F + freqsHz.indexOf(13);
    expect(r.effect.ciHigh[idx]).toBeLessThan(0);
  });
});
