import { describe, expect, it } from 'vitest';
import { solveSpectrum } from '../../src/core/spectrum/aperiodic-fit.ts';
import { runPython } from '../helpers/python.ts';
import { EPOCHS_2H_N2, SEGMENTS_PER_EPOCH, effectiveSegments, simulatedCase } from './simulated-cases.ts';

// Outside reference: scipy.optimize.curve_fit (scipy 1.17, bounded → trust-region reflective) on
// the same model L(f) = b − log10(k + f^χ) + Σ h·exp(−(f−c)²/(2w²)), the
// same data, start values and bounds. 16 seeded spectra at 2-hour N2 noise and 8 at 10× that
// noise standard deviation (more peaks and refits), both aperiodic modes. scipy's tolerances are
// tightened to 1e-12: at its defaults (1e-8) it stops early along the flat knee direction (seen:
// knee 34.782 vs 34.805 at equal RMSE 0.064768), i.e. the reference itself was not converged.
const SCRIPT = `
from scipy.optimize import curve_fit
out = []
for i in range(int(numpy.fromfile(inputs['count'])[0])):
    f = numpy.fromfile(inputs[f'f{i}']); y = numpy.fromfile(inputs[f'y{i}'])
    p0 = numpy.fromfile(inputs[f'p{i}']); lo = numpy.fromfile(inputs[f'lo{i}']); hi = numpy.fromfile(inputs[f'hi{i}'])
    knee = numpy.fromfile(inputs[f'k{i}'])[0] > 0
    def model(f, *p):
        b, k, chi, first = (p[0], p[1], p[2], 3) if knee else (p[0], 0.0, p[1], 2)
        v = b - numpy.log10(k + f**chi)
        for j in range(first, len(p), 3):
            v = v + p[j+1] * numpy.exp(-(f - p[j])**2 / (2 * p[j+2]**2))
        return v
    popt, _ = curve_fit(model, f, y, p0=p0, bounds=(lo, hi), maxfev=20000, ftol=1e-12, xtol=1e-12, gtol=1e-12)
    out.append(list(popt))
print(json.dumps(out))
`;

describe('joint fit agrees with scipy.optimize.curve_fit', () => {
  it('to within 1e-3 in every parameter, given the same model, start values and bounds', () => {
    const arrays: Record<string, ArrayLike<number>> = {};
    const ours: Float64Array[] = [];
    const labels: string[] = [];
    const nAv = Math.round(effectiveSegments(SEGMENTS_PER_EPOCH, EPOCHS_2H_N2));
    const cases = [
      ...Array.from({ length: 16 }, (_, i) => ({ seed: 200 + i, nAv })),
      ...Array.from({ length: 8 }, (_, i) => ({ seed: 300 + i, nAv: Math.round(nAv / 100) })),
    ];
    let refitted = 0;
    cases.forEach(({ seed, nAv: n }, i) => {
      const c = simulatedCase(seed, n);
      const { problem, params, refits } = solveSpectrum(c.freqsHz, c.power, { aperiodicForm: c.mode });
      if (refits > 0) refitted++;
      arrays[`f${i}`] = problem.freqsHz;
      arrays[`y${i}`] = problem.log10Power;
      arrays[`p${i}`] = problem.start;
      arrays[`lo${i}`] = problem.lower;
      arrays[`hi${i}`] = problem.upper;
      arrays[`k${i}`] = [problem.mode === 'knee' ? 1 : 0];
      ours.push(params);
      labels.push(`seed ${seed} ${problem.mode} (${(params.length - (problem.mode === 'knee' ? 3 : 2)) / 3} peaks, ${refits} refits)`);
    });
    arrays.count = [cases.length];
    const reference = runPython<number[][]>(SCRIPT, arrays);
    let worst = 0;
    let worstAt = '';
    reference.forEach((ref, i) => {
      expect(ref).toHaveLength(ours[i].length);
      for (let q = 0; q < ref.length; q++) {
        const d = Math.abs(ours[i][q] - ref[q]);
        if (d > worst) {
          worst = d;
          worstAt = `${labels[i]}, parameter ${q}: ours ${ours[i][q]}, scipy ${ref[q]}`;
        }
      }
    });
    console.log(`curve_fit agreement over ${cases.length} spectra (${refitted} with peak-removal refits): worst |Δ| = ${worst.toExponential(2)} at ${worstAt}`);
    expect(refitted).toBeGreaterThan(0);
    expect(worst).toBeLessThan(1e-3);
  });
});
