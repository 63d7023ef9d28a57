// Power grows with the number of subjects and with the effect (a property of every consistent test,
// common practice): N2 residual spectra of 60 synthetic reference subjects, 4 channels × 8–16 Hz,
// effect planted in Fp1 and Fpz at 11–15 Hz, cluster mass with 199 permutations, n = 6, 12, 24 per
// group, 100 simulations each, effects 0.001 and 0.002 log10 (the synthetic residual varies
// between subjects only by the Welch estimate's noise, about 0.004 log10, so these are moderate
// effects there). About 4 s on one core. Intervals: Clopper–Pearson 95 %.
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { simulatePower, type PowerPoint } from '../../src/core/planning/index.ts';
import { syntheticCohort } from './synthetic-cohort.ts';

const { data } = syntheticCohort(120, 4, 21);
const contrast = parseContrast({
  design: 'groups',
  groups: ['control', 'patient'],
  stage: 'N2',
  fminHz: 8,
  fmaxHz: 16,
  permutations: 199,
  measure: 'residual',
});
const curve = (effect: number) =>
  simulatePower(
    contrast,
    {
      referenceGroup: 'control',
      effect,
      band: { name: 'b', loHz: 11, hiHz: 15 },
      channels: ['Fp1', 'Fpz'],
      nPerGroup: [6, 12, 24],
      simulations: 100,
      seed: 9,
      alpha: 0.05,
    },
    data,
  ).curve;
const text = (c: PowerPoint[]) => c.map((p) => `n ${p.nPerGroup}: ${p.power.toFixed(2)} [${p.ciLow.toFixed(2)}, ${p.ciHigh.toFixed(2)}]`).join('; ');

describe('power grows with n and with the effect', () => {
  it('rises with n at each effect and with the effect at each n', () => {
    const small = curve(0.001);
    const large = curve(0.002);
    console.log(`effect 0.001: ${text(small)}\neffect 0.002: ${text(large)}`);
    for (const c of [small, large]) {
      for (let i = 1; i < c.length; i++) expect(c[i].power).toBeGreaterThanOrEqual(c[i - 1].power);
      // n = 24 against n = 6: the intervals do not overlap
      expect(c[2].ciLow).toBeGreaterThan(c[0].ciHigh);
    }
    for (let i = 0; i < 3; i++) expect(large[i].power).toBeGreaterThanOrEqual(small[i].power);
    expect(large[1].ciLow).toBeGreaterThan(small[1].ciHigh);
    expect(large[2].ciLow).toBeGreaterThan(small[2].ciHigh);
  });
});
