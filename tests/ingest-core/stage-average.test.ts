import { describe, expect, it } from 'vitest';
import { runPython } from '../helpers/python.ts';
import {
  averageStage,
  chiSquareMedianRatio,
  hannWindow,
  overlapCorrelation,
  stageMean,
  stageMedian,
  welchDegreesOfFreedom,
} from '../../src/core/spectrum/stage-average.ts';
import { Welch } from '../../src/core/spectrum/welch.ts';
import { Random } from '../../src/core/stats/random.ts';

describe('median bias of epoch spectra', () => {
  it('Wilson–Hilferty median ratio agrees with scipy.stats.chi2.median(ν)/ν', () => {
    const nus = [4, 8, 14.5, 26.6, 50, 200];
    // outside reference: scipy.stats.chi2 (machine's python3)
    const exact = runPython<number[]>(`from scipy.stats import chi2
print(json.dumps([float(chi2.median(v) / v) for v in ${JSON.stringify(nus)}]))`);
    // the approximation error shrinks as O(1/ν²): below 0.1/ν² here (3e-3 at ν = 4, 1e-4 at ν = 26.6)
    nus.forEach((nu, i) => expect(Math.abs(chiSquareMedianRatio(nu) - exact[i])).toBeLessThan(0.1 / (nu * nu)));
  });

  it('Hann overlap correlation at 50 % is 1/6 and ν of 14 segments is ≈ 26.6', () => {
    // closed form for the periodic Hann window at half overlap: ρ(1) = 1/6 (Σ w[n]w[n+N/2] / Σ w²)
    const w = hannWindow(1024);
    expect(overlapCorrelation(w, 512, 1)).toBeCloseTo(1 / 6, 10);
    expect(overlapCorrelation(w, 512, 2)).toBe(0);
    expect(welchDegreesOfFreedom(14, w, 512)).toBeCloseTo(28 / (1 + (2 * (13 / 14)) / 36), 10);
    expect(welchDegreesOfFreedom(1, w, 512)).toBe(2);
  });

  // Gaussian white noise, σ = 1, fs = 100 Hz: true one-sided density 2σ²/fs = 0.02 per Hz.
  // Size: 300 epochs of 30 s (14 segments of 4 s each, 50 % overlap) — the bin-averaged median is
  // then known to ≈ 0.3 %, so the 2.5 % median bias is resolved and the corrected mean within 1 %.
  const fs = 100;
  const welch = new Welch(fs, { segmentS: 4, overlap: 0.5 });
  const nEpochs = 300;
  const epochLen = 30 * fs;
  const spectra = new Float32Array(nEpochs * welch.nBins);
  const rng = new Random(11);
  const x = new Float64Array(epochLen);
  const psd = new Float64Array(welch.nBins);
  let K = 0;
  for (let e = 0; e < nEpochs; e++) {
    for (let i = 0; i < epochLen; i++) x[i] = rng.normal();
    K = welch.mean(x, 0, epochLen, psd);
    spectra.set(psd, e * welch.nBins);
  }
  const nu = welchDegreesOfFreedom(K, hannWindow(welch.nPerSeg), welch.step);
  const rows = Int32Array.from({ length: nEpochs }, (_, i) => i);
  const truth = 2 / fs;
  const interiorMean = (p: ArrayLike<number>) => {
    let s = 0;
    for (let k = 1; k < welch.nBins - 1; k++) s += p[k];
    return s / (welch.nBins - 2);
  };

  it('ν matches the variance of white-noise epoch estimates: var/mean² = 2/ν', () => {
    let rel = 0;
    for (let k = 1; k < welch.nBins - 1; k++) {
      let m = 0;
      let v = 0;
      for (let e = 0; e < nEpochs; e++) m += spectra[e * welch.nBins + k];
      m /= nEpochs;
      for (let e = 0; e < nEpochs; e++) v += (spectra[e * welch.nBins + k] - m) ** 2;
      rel += v / (nEpochs - 1) / (m * m);
    }
    rel /= welch.nBins - 2;
    expect(Math.abs(rel - 2 / nu) / (2 / nu)).toBeLessThan(0.05);
  });

  it('median average is unbiased on white noise after the χ² correction (within 1 %)', () => {
    const med = new Float64Array(welch.nBins);
    const mean = new Float64Array(welch.nBins);
    stageMedian(spectra, welch.nBins, rows, nu, med);
    stageMean(spectra, welch.nBins, rows, mean);
    expect(Math.abs(interiorMean(mean) / truth - 1)).toBeLessThan(0.01);
    expect(Math.abs(interiorMean(med) / truth - 1)).toBeLessThan(0.01);
    // without the correction the median is biased low by 1 − b(ν) ≈ 2.5 %
    expect((interiorMean(med) * chiSquareMedianRatio(nu)) / truth).toBeLessThan(0.985);
  });

  it('flags a stage with too few clean epochs but still stores its count', () => {
    const few = averageStage(spectra, welch.nBins, [0, 1, 2], nu, 10)!;
    expect(few.nEpochs).toBe(3);
    expect(few.flagged).toBe(true);
    expect(few.flagReason).toBe('too-few-epochs');
    expect(few.mean[5]).toBeCloseTo((spectra[5] + spectra[welch.nBins + 5] + spectra[2 * welch.nBins + 5]) / 3, 6);
    expect(averageStage(spectra, welch.nBins, rows.subarray(0, 10), nu, 10)!.flagged).toBe(false);
    expect(averageStage(spectra, welch.nBins, [], nu)).toBeNull();
  });
});
