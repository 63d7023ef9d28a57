import { describe, expect, it } from 'vitest';
import { fitSpectrum } from '../../src/core/spectrum/aperiodic-fit.ts';
import { EPOCHS_2H_N2, SEGMENTS_PER_EPOCH, effectiveSegments, simulatedCase } from './simulated-cases.ts';

// Recovery of known parameters at the noise of a 2-hour N2 average (see simulated-cases.ts).
// Tolerances from issue 4: exponent and offset ±0.05, peak centres ±0.25 Hz. 60 seeded cases.
const CASES = 60;
const ALLOWED_FAILURES = 1;

describe('aperiodic + peak fit: recovery of simulated parameters', () => {
  it('the effective segment count of a 2-hour N2 average is about 3195', () => {
    // 240 × 14 / (1 + 2·(13/14)/36): ρ = 1/6 for Hann at 50 % overlap (Welch 1967; Harris 1978, Proc. IEEE 66:51–83, table I "overlap correlation" 16.7 %)
    expect(effectiveSegments(SEGMENTS_PER_EPOCH, EPOCHS_2H_N2)).toBeCloseTo(3360 / (1 + (2 * 13) / 14 / 36), 6);
    expect(Math.round(effectiveSegments(SEGMENTS_PER_EPOCH, EPOCHS_2H_N2))).toBe(3195);
  });

  it(`recovers exponent, offset and peak centres in ${CASES} seeded cases with at most ${ALLOWED_FAILURES} failure`, () => {
    const nAveraged = Math.round(effectiveSegments(SEGMENTS_PER_EPOCH, EPOCHS_2H_N2));
    const failures: string[] = [];
    let peaksTotal = 0;
    for (let seed = 1; seed <= CASES; seed++) {
      const c = simulatedCase(seed, nAveraged);
      const fit = fitSpectrum(c.freqsHz, c.power, { aperiodicForm: c.mode });
      const problems: string[] = [];
      const dExp = fit.exponent - c.truth.aperiodic.exponent;
      const dOff = fit.offset - c.truth.aperiodic.offset;
      if (Math.abs(dExp) > 0.05) problems.push(`exponent off by ${dExp.toFixed(3)}`);
      if (Math.abs(dOff) > 0.05) problems.push(`offset off by ${dOff.toFixed(3)}`);
      const used = new Set<number>();
      for (const p of c.truth.peaks) {
        peaksTotal++;
        const j = fit.peaks.findIndex((q, i) => !used.has(i) && Math.abs(q.centerHz - p.centerHz) <= 0.25);
        if (j < 0) problems.push(`peak at ${p.centerHz.toFixed(2)} Hz not found`);
        else used.add(j);
      }
      for (let i = 0; i < fit.peaks.length; i++) if (!used.has(i)) problems.push(`extra peak at ${fit.peaks[i].centerHz.toFixed(2)} Hz`);
      if (problems.length > 0) failures.push(`seed ${seed} (${c.mode}): ${problems.join('; ')}`);
    }
    console.log(`recovery: ${failures.length} of ${CASES} cases failed (${peaksTotal} true peaks)${failures.length ? '\n  ' + failures.join('\n  ') : ''}`);
    expect(peaksTotal).toBeGreaterThan(60);
    expect(failures.length).toBeLessThanOrEqual(ALLOWED_FAILURES);
  });
});
