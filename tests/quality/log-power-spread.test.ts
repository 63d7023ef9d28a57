import { describe, expect, it } from 'vitest';
import { runPython } from '../helpers/python.ts';
import {
  bandRelativeVariance,
  BIN_COVARIANCE_LAGS,
  hannBinCovariance,
  log10PowerSd,
  stageLogPowerSd,
  welchBinCovariance,
} from '../../src/core/quality/log-power-spread.ts';
import { hannWindow, welchDegreesOfFreedom } from '../../src/core/spectrum/stage-average.ts';
import { bandBins } from '../../src/core/spectrum/bands.ts';

// 30-s epochs at 128 Hz, 4-s Hann segments with 50 % overlap: K = 14 segments of 512 samples.
const FS = 128;
const NPERSEG = 512;
const STEP = 256;
const K = 14;

describe('covariance of Welch bins', () => {
  it('C(0) is 2/ν with ν the Welch equivalent degrees of freedom (Welch 1967)', () => {
    const c = welchBinCovariance(hannWindow(NPERSEG), STEP, K);
    expect(c[0]).toBeCloseTo(2 / welchDegreesOfFreedom(K, hannWindow(NPERSEG), STEP), 12);
    // one periodogram (K = 1) of the Hann window: |W(q)|²/|W(0)|² = 1, 4/9, 1/36, 0 … (the
    // window's squared transform has three nonzero lines, Harris 1978)
    const one = welchBinCovariance(hannWindow(NPERSEG), STEP, 1);
    expect(Array.from(one.subarray(0, 4))).toEqual([expect.closeTo(1, 12), expect.closeTo(4 / 9, 12), expect.closeTo(1 / 36, 12), expect.closeTo(0, 12)]);
  });

  it('drops to nothing within the lags kept', () => {
    const c = welchBinCovariance(hannWindow(NPERSEG), STEP, K, BIN_COVARIANCE_LAGS + 6);
    for (let q = BIN_COVARIANCE_LAGS + 1; q < c.length; q++) expect(c[q] / c[0]).toBeLessThan(1e-6);
    expect(hannBinCovariance(NPERSEG, STEP, K)).toEqual(welchBinCovariance(hannWindow(NPERSEG), STEP, K));
  });

  it('rejects bad input naming the value', () => {
    expect(() => welchBinCovariance(hannWindow(8), 4, 0)).toThrow(/segment count: 0/);
    expect(() => bandRelativeVariance(new Float64Array(10), 2, 12, [1])).toThrow(/2–12/);
    expect(() => log10PowerSd(0)).toThrow(/relative variance: 0/);
  });
});

describe('sampling sd of log10 band power against scipy.signal.welch on simulated noise', () => {
  // Outside reference: 3000 epochs of Gaussian noise with a given spectrum (numpy, by spectral
  // shaping), each through scipy.signal.welch (Hann, nperseg 512, 50 % overlap), band-averaged
  // over 0.5–45 Hz and 25–45 Hz; the observed SD of log10 band power across epochs (its relative
  // standard error 1/√(2·3000) = 1.3 %) against ours from the median spectrum's shape.
  const cases = ['white', 'one-over-f', 'one-over-f2', 'slow-peak'] as const;
  const result = runPython<Record<string, { sdBroad: number; sdMuscle: number; spectra: number[] }>>(`
import scipy.signal
rng = numpy.random.default_rng(41)
fs, L, R = ${FS}, 30 * ${FS}, 3000
f = numpy.fft.rfftfreq(L, 1 / fs)
fc = numpy.maximum(f, 0.5)
shapes = {
  'white': numpy.ones_like(f),
  'one-over-f': 10 / fc,
  'one-over-f2': 100 / fc**2 + 0.5,
  'slow-peak': 100 / fc**2 + 0.5 + 400 * numpy.exp(-0.5 * ((f - 0.75) / 0.2)**2),
}
out = {}
for name, S in shapes.items():
  X = numpy.sqrt(S) * (rng.standard_normal((R, f.size)) + 1j * rng.standard_normal((R, f.size)))
  X[:, 0] = 0
  x = numpy.fft.irfft(X, n=L, axis=1)
  fw, P = scipy.signal.welch(x, fs=fs, nperseg=${NPERSEG}, noverlap=${NPERSEG - STEP}, axis=1)
  b = (fw >= 0.5) & (fw <= 45)
  m = (fw >= 25) & (fw <= 45)
  out[name] = {
    'sdBroad': float(numpy.std(numpy.log10(P[:, b].mean(axis=1)), ddof=1)),
    'sdMuscle': float(numpy.std(numpy.log10(P[:, m].mean(axis=1)), ddof=1)),
    'spectra': P[:200, fw <= 45].ravel().tolist(),
  }
print(json.dumps(out))
`);
  const nBins = 181; // 0 … 45 Hz in 0.25-Hz steps
  const cov = hannBinCovariance(NPERSEG, STEP, K);
  const broad = bandBins({ name: 'b', loHz: 0.5, hiHz: 45 }, 0, 0.25, nBins)!;
  const muscle = bandBins({ name: 'm', loHz: 25, hiHz: 45 }, 0, 0.25, nBins)!;
  const rows = Int32Array.from({ length: 200 }, (_, i) => i);

  for (const name of cases) {
    it(`${name} noise: ours within 5 % of the simulated SD`, () => {
      const r = result[name];
      const spectra = Float32Array.from(r.spectra);
      const sdBroad = stageLogPowerSd(spectra, nBins, rows, broad.first, broad.last, cov);
      const sdMuscle = stageLogPowerSd(spectra, nBins, rows, muscle.first, muscle.last, cov);
      console.log(
        `${name}: broadband ours ${sdBroad.toFixed(4)} vs simulated ${r.sdBroad.toFixed(4)}; muscle ours ${sdMuscle.toFixed(4)} vs ${r.sdMuscle.toFixed(4)}`,
      );
      expect(Math.abs(sdBroad / r.sdBroad - 1)).toBeLessThan(0.05);
      expect(Math.abs(sdMuscle / r.sdMuscle - 1)).toBeLessThan(0.05);
    });
  }
});
