/**
 * simulateSpectrum draws model spectra with the noise of an n-segment average: each bin is
 * 10^L(f)·Gamma(n, 1/n). Outside references: scipy.stats.kstest against scipy.stats.gamma for
 * the deviates, and the digamma/trigamma functions of scipy.special for the mean and variance
 * of log10 of the noise factor (E ln G = ψ(n) − ln n, Var ln G = ψ′(n) for G ~ Gamma(n, 1/n)).
 */
import { describe, expect, it } from 'vitest';
import { gammaDeviate, simulateSpectrum } from '../../src/core/simulate/index.ts';
import { modelLog10 } from '../../src/core/spectrum/aperiodic-model.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

describe('gammaDeviate', () => {
  const shapes = [0.5, 1, 7, 1680];
  const rng = new Random(5);
  const draws = Object.fromEntries(shapes.map((shape, i) => [`g${i}`, Float64Array.from({ length: 4000 }, () => gammaDeviate(shape, rng))]));
  const pValues = runPython<number[]>(
    `from scipy import stats
print(json.dumps([float(stats.kstest(numpy.fromfile(inputs[f'g{i}']), stats.gamma(a).cdf).pvalue) for i, a in enumerate(${JSON.stringify(shapes)})]))`,
    draws,
  );

  it.each(shapes.map((s, i) => [s, i]))('Gamma(%s) deviates pass a Kolmogorov–Smirnov test against scipy.stats.gamma (4000 draws)', (_, i) => {
    expect(pValues[i]).toBeGreaterThan(0.001);
  });

  it('rejects a bad shape', () => {
    expect(() => gammaDeviate(0, new Random(1))).toThrow(/shape/);
  });
});

describe('simulateSpectrum', () => {
  const params = { aperiodic: { offset: 2, exponent: 2.2, knee: 0 }, peaks: [{ centerHz: 13.5, height: 0.5, widthHz: 1 }] };
  const freqs = Float64Array.from({ length: 160 }, (_, i) => 0.25 * (i + 4)); // 1 … 40.75 Hz

  const ns = [10, 1680];
  const ref = runPython<[number, number][]>(
    `from scipy.special import digamma, polygamma
print(json.dumps([[float((digamma(n) - numpy.log(n)) / numpy.log(10)), float(numpy.sqrt(polygamma(1, n)) / numpy.log(10))] for n in ${JSON.stringify(ns)}]))`,
  );

  it.each(ns.map((n, i) => [n, i]))('log10 noise around the model has the mean and SD of log10 Gamma(n, 1/n) for n = %s (scipy.special)', (n, i) => {
    const rng = new Random(9);
    const model = modelLog10(freqs, params.aperiodic, params.peaks);
    const d: number[] = [];
    for (let rep = 0; rep < 25; rep++) {
      const s = simulateSpectrum(params, freqs, n, rng);
      for (let k = 0; k < freqs.length; k++) d.push(Math.log10(s[k]) - model[k]);
    }
    const mean = d.reduce((a, b) => a + b, 0) / d.length;
    const sd = Math.sqrt(d.reduce((a, b) => a + (b - mean) ** 2, 0) / (d.length - 1));
    const [refMean, refSd] = ref[i];
    // 4000 values: SE of the mean ≈ sd/63, of the SD ≈ sd/89
    expect(Math.abs(mean - refMean)).toBeLessThan(4 * (refSd / 63));
    expect(Math.abs(sd / refSd - 1)).toBeLessThan(0.05);
  });

  it('is reproducible from the generator state and rejects f ≤ 0', () => {
    expect(simulateSpectrum(params, freqs, 50, new Random(3))).toEqual(simulateSpectrum(params, freqs, 50, new Random(3)));
    expect(() => simulateSpectrum(params, [0, 1], 50, new Random(3))).toThrow(/0 Hz/);
  });
});
