import { describe, expect, it } from 'vitest';
import { fitSpectrum } from '../../src/core/spectrum/aperiodic-fit.ts';
import { modelLog10 } from '../../src/core/spectrum/aperiodic-model.ts';
import { residualSpectrum } from '../../src/core/spectrum/residual.ts';
import { SpectrumFitError } from '../../src/core/spectrum/fit-error.ts';
import { runPython } from '../helpers/python.ts';
import { spectrumFrequencies } from './simulated-cases.ts';

const freqs = spectrumFrequencies();

describe('residual spectrum', () => {
  it('equals numpy log10(P) − (b − log10(k + f^χ)) from stored values', () => {
    const power = modelLog10(freqs, { offset: 1.7, exponent: 2.1, knee: 30 }, [{ centerHz: 13, height: 0.3, widthHz: 1.5 }]).map((v) => 10 ** v);
    const ours = residualSpectrum(freqs, power, { offset: 1.7, exponent: 2.1, knee: 30 });
    const ref = runPython<number[]>(
      `f = numpy.fromfile(inputs['f']); p = numpy.fromfile(inputs['p'])\nprint(json.dumps(list(numpy.log10(p) - (1.7 - numpy.log10(30 + f**2.1)))))`,
      { f: freqs, p: power },
    );
    for (let i = 0; i < freqs.length; i++) expect(ours[i]).toBeCloseTo(ref[i], 12);
  });

  it('of a fitted noise-free spectrum is the Gaussian peak itself', () => {
    const power = modelLog10(freqs, { offset: 2, exponent: 1.2, knee: 0 }, [{ centerHz: 10, height: 0.5, widthHz: 1 }]).map((v) => 10 ** v);
    const fit = fitSpectrum(freqs, power);
    const r = residualSpectrum(freqs, power, fit);
    expect(r[39]).toBeCloseTo(0.5, 5); // 10 Hz: peak height
    expect(r[19]).toBeCloseTo(0.5 * Math.exp(-25 / 2), 5); // 5 Hz: 5 widths away
  });

  it('refuses non-positive power and frequencies', () => {
    expect(() => residualSpectrum([0, 1], [1, 1], { offset: 0, exponent: 1, knee: 0 })).toThrow(SpectrumFitError);
    expect(() => residualSpectrum([1, 2], [1, -1], { offset: 0, exponent: 1, knee: 0 })).toThrow(/power: value -1 at 2 Hz/);
  });
});
