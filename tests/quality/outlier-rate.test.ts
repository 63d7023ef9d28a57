import { beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_REJECTION, modifiedZ, spectralOutliers } from '../../src/core/quality/epoch-rejection.ts';
import { hannBinCovariance, samplingFloors } from '../../src/core/quality/log-power-spread.ts';
import { outlierRate } from '../../src/core/quality/outlier-limit.ts';
import { bandBins, meanDensity } from '../../src/core/spectrum/bands.ts';
import { Welch } from '../../src/core/spectrum/welch.ts';
import { SpectralSynthesizer } from '../../src/core/simulate/synthesis.ts';
import { Random } from '../../src/core/stats/random.ts';
import { medianInPlace } from '../../src/core/stats/median.ts';

// Clean epochs: Gaussian noise with S(f) = 100/f² + 0.5 µV²/Hz (1/f² below 0.5 Hz held at its
// 0.5-Hz value), 30 s at 128 Hz, through the project's Welch (4-s Hann segments, 50 % overlap).
// Stages of n = 10, 14, 20, 40 and 100 epochs are drawn from one pool of POOL epochs; for the
// scatter of real EEG each epoch's spectrum is scaled below and above 20 Hz by independent gains
// 10^(τ·Z), τ = 0.1 log10 units (our choice, a typical within-stage spread of sleep EEG band
// power, from memory; the same as scaling the signal's parts below and above 20 Hz). Size:
// POOL = 40 000 epochs, regrouped for each n with fresh gains: 40 000 channel-epochs per n, so at
// the stated 0.093 % about 37 rejections are expected per n (Poisson: 2× or ½× that has
// probability < 0.1 %). About 20–35 s on one core.
const FS = 128;
const L = 30 * FS;
const POOL = 40_000;
const TAU = 0.1;
const SIZES = [10, 14, 20, 40, 100];
const Z0 = DEFAULT_REJECTION.outlierZ;
const P0 = outlierRate(Z0); // 2Φ(−3.5) per measure
const STATED = 1 - (1 - P0) * (1 - P0); // either measure, the two independent

const welch = new Welch(FS, { segmentS: 4, overlap: 0.5, maxFreqHz: 45 });
const nBins = welch.nBins;
const step = welch.freqStepHz;
const K = welch.segmentCount(L);
const cov = hannBinCovariance(welch.nPerSeg, welch.step, K);
const broad = bandBins({ name: 'broadband', loHz: 0.5, hiHz: 45 }, 0, step, nBins)!;
const muscle = bandBins({ name: 'muscle', loHz: 25, hiHz: 45 }, 0, step, nBins)!;
const split = Math.round(20 / step); // first bin at or above 20 Hz
const density = (f: number) => 100 / Math.max(f, 0.5) ** 2 + 0.5;

let pool: Float32Array;

/** Welch spectra of `count` clean epochs (plus `artefact` added to each when given) into rows of a Float32Array. */
function clean(count: number, seed: number, artefact?: (x: Float64Array, rng: Random) => void): Float32Array {
  const syn = new SpectralSynthesizer(4096, FS);
  const amp = syn.amplitudes(density);
  const rng = new Random(seed);
  const a = new Float64Array(4096);
  const b = new Float64Array(4096);
  const psd = new Float64Array(nBins);
  const out = new Float32Array(count * nBins);
  for (let e = 0; e < count; e += 2) {
    syn.pair(amp, amp, rng, a, b);
    for (const [x, row] of [
      [a, e],
      [b, e + 1],
    ] as const) {
      if (row >= count) continue;
      if (artefact) artefact(x, rng);
      welch.mean(x, 0, L, psd);
      out.set(psd, row * nBins);
    }
  }
  return out;
}

interface Counts {
  stages: number;
  epochs: number;
  muscle: number;
  broadband: number;
  any: number;
  /** the rule until now: a plain cut at 3.5 */
  before: number;
  /** for comparison only: the floor alone, |x − median| > 3.5·max(1.4826·MAD, σ_s) */
  floorOnly: number;
  artefactHit: number;
  artefactHitBefore: number;
  artefactHitFloorOnly: number;
}

/** |x_i − median| > z·max(1.4826·MAD, floor) for each i (the floor alone, without the limit c_n). */
function floorOnlyRule(values: Float64Array, z: number, floor: number): boolean[] {
  const med = medianInPlace(Float64Array.from(values));
  const dev = values.map((v) => Math.abs(v - med));
  const sd = Math.max(1.4826 * medianInPlace(Float64Array.from(dev)), floor);
  return Array.from(dev, (d) => d > z * sd);
}

/**
 * Groups the pool into stages of n (rows shuffled), optionally with gains, optionally with one
 * artefact epoch from `artefacts` as the stage's first epoch; applies the rule now and before.
 */
function judge(n: number, seed: number, scatter: boolean, artefacts?: Float32Array): Counts {
  const rng = new Random(seed);
  const order = rng.shuffle(Int32Array.from({ length: POOL }, (_, i) => i));
  const nArtefacts = artefacts ? artefacts.length / nBins : 0;
  const stages = artefacts ? nArtefacts : Math.floor(POOL / n);
  const c: Counts = {
    stages,
    epochs: 0,
    muscle: 0,
    broadband: 0,
    any: 0,
    before: 0,
    floorOnly: 0,
    artefactHit: 0,
    artefactHitBefore: 0,
    artefactHitFloorOnly: 0,
  };
  const spectra = new Float32Array(n * nBins);
  const logB = new Float64Array(n);
  const logM = new Float64Array(n);
  const group = new Int32Array(n);
  const eligible = new Uint8Array(n).fill(1);
  const idx = Int32Array.from({ length: n }, (_, i) => i);
  let next = 0;
  for (let s = 0; s < stages; s++) {
    for (let i = 0; i < n; i++) {
      const isArtefact = artefacts !== undefined && i === 0;
      const src = isArtefact ? artefacts : pool;
      const row = isArtefact ? s : order[next++ % POOL];
      const gLow = scatter ? 10 ** (TAU * rng.normal()) : 1;
      const gHigh = scatter ? 10 ** (TAU * rng.normal()) : 1;
      for (let k = 0; k < nBins; k++) spectra[i * nBins + k] = src[row * nBins + k] * (k < split ? gLow : gHigh);
      const one = spectra.subarray(i * nBins, (i + 1) * nBins);
      logB[i] = Math.log10(meanDensity(one, broad.first, broad.last));
      logM[i] = Math.log10(meanDensity(one, muscle.first, muscle.last));
    }
    const floors = samplingFloors(spectra, nBins, step, group, eligible, 1, DEFAULT_REJECTION, cov);
    const found = spectralOutliers(logB, logM, group, eligible, Z0, floors);
    const zb = modifiedZ(logB, idx);
    const zm = modifiedZ(logM, idx);
    const before = (i: number) => zb[i] > Z0 || zm[i] > Z0; // the rule until now: a plain cut at 3.5
    const fb = floorOnlyRule(logB, Z0, floors.broadband[0]);
    const fm = floorOnlyRule(logM, Z0, floors.muscle[0]);
    if (artefacts) {
      if (found.some((r) => r.epoch === 0)) c.artefactHit++;
      if (before(0)) c.artefactHitBefore++;
      if (fb[0] || fm[0]) c.artefactHitFloorOnly++;
      continue;
    }
    c.epochs += n;
    for (const r of found) c[r.reason === 'muscle-outlier' ? 'muscle' : 'broadband']++;
    c.any += found.length;
    for (let i = 0; i < n; i++) {
      if (before(i)) c.before++;
      if (fb[i] || fm[i]) c.floorOnly++;
    }
  }
  return c;
}

beforeAll(() => {
  pool = clean(POOL, 24);
}, 300_000);

describe('false rejections of the outlier rule on clean stages (issue 24)', () => {
  it('with real-EEG-like scatter, removes the stated share at every stage length; the plain cut at 3.5 did not', () => {
    for (const n of SIZES) {
      const c = judge(n, 100 + n, true);
      const rate = c.any / c.epochs;
      console.log(
        `scatter τ=${TAU}, n=${n}: ${c.any} of ${c.epochs} (${(rate * 100).toFixed(3)} %; muscle ${c.muscle}, broadband ${c.broadband}); plain cut at 3.5: ${c.before} (${((100 * c.before) / c.epochs).toFixed(2)} %); floor alone: ${c.floorOnly} (${((100 * c.floorOnly) / c.epochs).toFixed(2)} %); stated ${(STATED * 100).toFixed(3)} %`,
      );
      expect(rate).toBeGreaterThan(STATED / 2);
      expect(rate).toBeLessThan(2 * STATED);
      // each measure at most twice its own stated share 2Φ(−3.5)
      expect(c.muscle / c.epochs).toBeLessThan(2 * P0);
      expect(c.broadband / c.epochs).toBeLessThan(2 * P0);
      // the rule until now, for contrast: 2.4× the stated share at n = 100, 20–40× at n ≤ 14
      if (n <= 20) expect(c.before / c.epochs).toBeGreaterThan(5 * STATED);
    }
  }, 120_000);

  it('with only the sampling noise of the estimator (stationary noise), removes at most the stated share', () => {
    for (const n of SIZES) {
      const c = judge(n, 200 + n, false);
      const rate = c.any / c.epochs;
      console.log(
        `stationary, n=${n}: ${c.any} of ${c.epochs} (${(rate * 100).toFixed(3)} %); plain cut at 3.5: ${c.before} (${((100 * c.before) / c.epochs).toFixed(2)} %); floor alone: ${c.floorOnly} (${((100 * c.floorOnly) / c.epochs).toFixed(3)} %)`,
      );
      expect(rate).toBeLessThan(2 * STATED);
    }
  }, 120_000);
});

// Planted artefacts (sizes stated), each the first epoch of a stage of n clean epochs with the
// scatter above; 400 artefact epochs per kind, each judged at every n.
//  - movement: as the demo generator plants it (src/core/simulate/generate.ts): white noise
//    through a one-pole 1-Hz low-pass plus 3× white noise, sin² envelope, 2–8 s, scaled to an RMS
//    of 150 µV (the demo's size) or 50 µV;
//  - muscle: white noise (flat to 64 Hz) with a sin² envelope over 5 s, RMS 80 µV (raises the
//    epoch's 25–45 Hz power about 11×) or 40 µV (about 3.6×).
const N_ARTEFACTS = 400;

function movement(rmsUv: number) {
  return (x: Float64Array, rng: Random) => {
    const d = 2 + 6 * rng.uniform();
    const n = Math.round(d * FS);
    const start = Math.floor(rng.uniform() * (L - n + 1));
    const a = Math.exp((-2 * Math.PI * 1) / FS);
    const burst = new Float64Array(n);
    let y = 0;
    let sumSq = 0;
    for (let i = 0; i < n; i++) {
      y = a * y + rng.normal();
      const e = Math.sin((Math.PI * i) / n);
      burst[i] = e * e * (y + 3 * rng.normal());
      sumSq += burst[i] * burst[i];
    }
    const scale = rmsUv / Math.sqrt(sumSq / n);
    for (let i = 0; i < n; i++) x[start + i] += scale * burst[i];
  };
}

function muscleBurst(rmsUv: number) {
  return (x: Float64Array, rng: Random) => {
    const n = 5 * FS;
    const start = Math.floor(rng.uniform() * (L - n + 1));
    const burst = new Float64Array(n);
    let sumSq = 0;
    for (let i = 0; i < n; i++) {
      const e = Math.sin((Math.PI * i) / n);
      burst[i] = e * e * rng.normal();
      sumSq += burst[i] * burst[i];
    }
    const scale = rmsUv / Math.sqrt(sumSq / n);
    for (let i = 0; i < n; i++) x[start + i] += scale * burst[i];
  };
}

describe('planted artefacts stay caught (issue 24)', () => {
  const kinds = [
    { name: 'movement 150 µV', make: movement(150), same: true },
    { name: 'muscle 80 µV', make: muscleBurst(80), same: true },
    { name: 'movement 50 µV', make: movement(50), same: false },
    { name: 'muscle 40 µV', make: muscleBurst(40), same: false },
  ];
  it('detects the demo-sized movement bursts and strong muscle bursts (from 14 epochs as often as the plain cut did)', () => {
    kinds.forEach((kind, j) => {
      const artefacts = clean(N_ARTEFACTS, 300 + j, kind.make);
      for (const n of SIZES) {
        const c = judge(n, 400 + 10 * j + n, true, artefacts);
        const now = c.artefactHit / N_ARTEFACTS;
        const before = c.artefactHitBefore / N_ARTEFACTS;
        console.log(
          `${kind.name}, n=${n}: caught ${(100 * now).toFixed(1)} % (plain cut at 3.5: ${(100 * before).toFixed(1)} %; floor alone: ${((100 * c.artefactHitFloorOnly) / N_ARTEFACTS).toFixed(1)} %)`,
        );
        if (kind.same) {
          // measured: at n = 10 the stated rate costs a little (movement 98.8 %, muscle 94.5 % with
          // these seeds, both 100 % before; standard error about 1 %); from n = 14 as before
          expect(now).toBeGreaterThan(n === 10 ? 0.92 : 0.99);
          if (n >= 14) expect(now).toBeGreaterThanOrEqual(before - 0.01);
        }
      }
    });
  }, 120_000);
});
