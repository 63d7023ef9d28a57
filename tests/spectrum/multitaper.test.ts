import { describe, expect, it } from 'vitest';
import { Multitaper, multitaper } from '../../src/core/spectrum/multitaper.ts';
import {
  chiSquareMedianRatio,
  hannWindow,
  stageMean,
  stageMedian,
  taperDegreesOfFreedom,
  welchDegreesOfFreedom,
} from '../../src/core/spectrum/stage-average.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

function noise(n: number, seed: number): Float64Array {
  const rng = new Random(seed);
  const x = new Float64Array(n);
  let prev = 0;
  // red-ish noise plus a sine, so the spectrum spans several decades like EEG
  for (let i = 0; i < n; i++) {
    prev = 0.95 * prev + rng.normal();
    x[i] = 20 * prev + 5 * Math.sin(0.37 * i) + 3;
  }
  return x;
}

/**
 * The reference: numpy/scipy only, built from scipy.signal.windows.dpss tapers — scipy.signal.welch's
 * segmentation (step nperseg − noverlap, trailing part dropped), each segment's mean removed,
 * |rfft(v_k · segment)|² / fs per taper, doubled except DC and Nyquist, mean over tapers, mean over segments.
 */
const REFERENCE = `from scipy.signal.windows import dpss
def mt(x, fs, nperseg, noverlap, nw, k):
    v = dpss(nperseg, nw, k)
    step = nperseg - noverlap
    count = (len(x) - nperseg) // step + 1
    acc = numpy.zeros(nperseg // 2 + 1)
    for s in range(count):
        seg = x[s * step : s * step + nperseg]
        seg = seg - seg.mean()
        p = (numpy.abs(numpy.fft.rfft(v * seg, axis=1)) ** 2).mean(axis=0) / fs
        if nperseg % 2 == 0:
            p[1:-1] *= 2
        else:
            p[1:] *= 2
        acc += p
    return acc / count
`;

describe('multitaper PSD', () => {
  it("equals a numpy/scipy reference built with scipy's dpss tapers to 1e-6 relative per bin", () => {
    const cases: { fs: number; segmentS: number; nw: number; k: number; offset?: number; overlap?: number }[] = [
      { fs: 128, segmentS: 4, nw: 2, k: 3 },
      { fs: 250, segmentS: 4, nw: 2, k: 3 },
      { fs: 256, segmentS: 4, nw: 3, k: 5 },
      { fs: 500, segmentS: 4, nw: 2, k: 3, offset: 4000 },
      { fs: 200, segmentS: 3, nw: 2.5, k: 4, overlap: 0 },
      { fs: 512, segmentS: 2, nw: 1.5, k: 2 },
    ];
    for (const [i, c] of cases.entries()) {
      const x = noise(c.fs * 30, 21 + i).map((v) => v + (c.offset ?? 0));
      const overlap = c.overlap ?? 0.5;
      const ours = multitaper(x, c.fs, { segmentS: c.segmentS, nw: c.nw, k: c.k, overlap });
      const n = c.fs * c.segmentS;
      const ref = runPython<number[]>(
        `${REFERENCE}\nx = numpy.fromfile(inputs['x'])\nprint(json.dumps(mt(x, ${c.fs}, ${n}, ${Math.round(overlap * n)}, ${c.nw}, ${c.k}).tolist()))`,
        { x },
      );
      expect(ours.psd.length).toBe(ref.length);
      let worst = 0;
      for (let b = 1; b < ref.length; b++) worst = Math.max(worst, Math.abs(ours.psd[b] - ref[b]) / ref[b]);
      expect(worst, `case ${i}`).toBeLessThan(1e-6);
      expect(ours.freqsHz[1]).toBeCloseTo(1 / c.segmentS, 12);
    }
  });

  it('integrates to the energy of the tapered segments (Parseval) and to A²/2 for a sine', () => {
    // Parseval: Σ_k P_k Δf over the one-sided bins (DC and Nyquist once) = (1/N) Σ |X_k|² = Σ (v·(x − m))²,
    // averaged over tapers and segments
    const fs = 256;
    const x = noise(fs * 30, 3);
    const est = new Multitaper(fs, { segmentS: 4, nw: 2 });
    const p = new Float64Array(est.nBins);
    const S = est.mean(x, 0, x.length, p);
    let integral = 0;
    for (let b = 0; b < est.nBins; b++) integral += p[b] * est.freqStepHz;
    let energy = 0;
    for (let s = 0; s < S; s++) {
      const o = s * est.step;
      let m = 0;
      for (let i = 0; i < est.nPerSeg; i++) m += x[o + i];
      m /= est.nPerSeg;
      for (const v of est.slepian.tapers) for (let i = 0; i < est.nPerSeg; i++) energy += (v[i] * (x[o + i] - m)) ** 2;
    }
    energy /= S * est.k;
    expect(Math.abs(integral / energy - 1)).toBeLessThan(1e-12);

    // a sine of amplitude A (on a bin, 10 Hz) carries power A²/2 (common practice; scipy's welch docs):
    // the multitaper density spreads it over ±W = ±NW/T = ±0.5 Hz, and nearly all of it lies within ±1 Hz
    const A = 7;
    const sine = Float64Array.from({ length: fs * 30 }, (_, i) => A * Math.sin((2 * Math.PI * 10 * i) / fs));
    const q = multitaper(sine, fs, { segmentS: 4, nw: 2 });
    let inside = 0;
    for (let b = 0; b < q.psd.length; b++) if (Math.abs(q.freqsHz[b] - 10) <= 1 + 1e-9) inside += q.psd[b] * 0.25;
    expect(Math.abs(inside / ((A * A) / 2) - 1)).toBeLessThan(1e-3);
    expect(est.halfBandwidthHz).toBe(0.5); // 2W = 2NW/T = 1 Hz for NW = 2, T = 4 s
  });

  it('refuses a bad NW or K, naming the value', () => {
    expect(() => new Multitaper(256, { nw: 0.5 })).toThrow(/NW: 0.5/);
    expect(() => new Multitaper(256, { nw: 2, k: 5 })).toThrow(/number of tapers K: 5/);
  });
});

describe('multitaper degrees of freedom and the median of epoch spectra', () => {
  it("taperDegreesOfFreedom with one unit-energy Hann window equals Welch's ν", () => {
    const w = hannWindow(400);
    let e = 0;
    for (const v of w) e += v * v;
    const unit = w.map((v) => v / Math.sqrt(e));
    for (const S of [1, 2, 14]) expect(taperDegreesOfFreedom(S, [unit], 200)).toBeCloseTo(welchDegreesOfFreedom(S, w, 200), 10);
  });

  // Gaussian white noise, σ = 1, fs = 100 Hz: true one-sided density 2σ²/fs = 0.02 per Hz.
  // Size: 200 epochs of 30 s (14 segments of 4 s, 50 % overlap, NW 2, K 3): ν ≈ 50 — the Slepian
  // tapers overlap more than Hann's — so the bin-averaged median is known to ≈ 0.2 % and its 1.3 % bias is resolved.
  const fs = 100;
  const est = new Multitaper(fs, { segmentS: 4, nw: 2 });
  const nEpochs = 200;
  const epochLen = 30 * fs;
  const spectra = new Float32Array(nEpochs * est.nBins);
  const rng = new Random(17);
  const x = new Float64Array(epochLen);
  const psd = new Float64Array(est.nBins);
  let S = 0;
  for (let e = 0; e < nEpochs; e++) {
    for (let i = 0; i < epochLen; i++) x[i] = rng.normal();
    S = est.mean(x, 0, epochLen, psd);
    spectra.set(psd, e * est.nBins);
  }
  const nu = taperDegreesOfFreedom(S, est.slepian.tapers, est.step);
  const rows = Int32Array.from({ length: nEpochs }, (_, i) => i);
  // bins away from DC and Nyquist by more than W (there the eigenspectra are correlated)
  const lo = 3;
  const hi = est.nBins - 4;
  const interiorMean = (p: ArrayLike<number>) => {
    let s = 0;
    for (let k = lo; k <= hi; k++) s += p[k];
    return s / (hi - lo + 1);
  };

  it('one segment has 2K degrees of freedom; ν matches the variance of white-noise epoch estimates: var/mean² = 2/ν', () => {
    expect(taperDegreesOfFreedom(1, est.slepian.tapers, est.step)).toBe(6); // 2K, K = 3
    let rel = 0;
    for (let k = lo; k <= hi; k++) {
      let m = 0;
      let v = 0;
      for (let e = 0; e < nEpochs; e++) m += spectra[e * est.nBins + k];
      m /= nEpochs;
      for (let e = 0; e < nEpochs; e++) v += (spectra[e * est.nBins + k] - m) ** 2;
      rel += v / (nEpochs - 1) / (m * m);
    }
    rel /= hi - lo + 1;
    expect(nu).toBeGreaterThan(45);
    expect(nu).toBeLessThan(84); // below the 2KS of independent segments
    expect(Math.abs(rel - 2 / nu) / (2 / nu)).toBeLessThan(0.06);
  });

  it('the median average is unbiased on white noise after the χ²_ν correction (within 0.5 %)', () => {
    const med = new Float64Array(est.nBins);
    const mean = new Float64Array(est.nBins);
    stageMedian(spectra, est.nBins, rows, nu, med);
    stageMean(spectra, est.nBins, rows, mean);
    const truth = 2 / fs;
    expect(Math.abs(interiorMean(mean) / truth - 1)).toBeLessThan(0.005);
    expect(Math.abs(interiorMean(med) / truth - 1)).toBeLessThan(0.005);
    // without the correction the median is biased low by 1 − b(ν) ≈ 1.3 %
    expect((interiorMean(med) * chiSquareMedianRatio(nu)) / truth).toBeLessThan(0.995);
  });
});
