/**
 * Waxing-waning bursts x(t) = A·sin²(πt/D)·cos(2πf·t + φ), 0 ≤ t ≤ D (a Hann envelope), and the
 * expected density of a train of them.
 *
 * Spectrum of the envelope h(t) = sin²(πt/D) on [0, D] (sin² = ½ − ½cos(2πt/D), each term a
 * shifted sinc):  |H(ν)| = D·|½·sinc(νD) + ¼·sinc(νD − 1) + ¼·sinc(νD + 1)|, sinc(x) = sin(πx)/(πx).
 * A burst's transform near +f is (A/2)·e^{iφ}·H(ν − f); bursts with independent phases at a rate
 * r (per s) add in power, so the one-sided density is  S(ν) = r·(A²/2)·E[|H(ν − f_b)|²],
 * averaged over the burst durations and frequencies (Papoulis, Probability, Random Variables
 * and Stochastic Processes, shot-noise spectra; derivation here). Total power r·(A²/2)·(3D/8).
 */

function sinc(x: number): number {
  if (Math.abs(x) < 1e-9) return 1;
  const px = Math.PI * x;
  return Math.sin(px) / px;
}

/** |H(ν)| of the sin² envelope of duration D (s), ν in Hz; |H(0)| = D/2. */
export function hannEnvelopeMagnitude(nuHz: number, durationS: number): number {
  const x = nuHz * durationS;
  return durationS * Math.abs(0.5 * sinc(x) + 0.25 * sinc(x - 1) + 0.25 * sinc(x + 1));
}

export interface BurstTrain {
  centerHz: number;
  amplitudeUv: number;
  durationS: [number, number];
  burstFrequencySdHz: number;
  perMinute: number;
}

// Quadrature nodes: durations at midpoints of 8 equal parts of [min, max]; burst frequencies at
// 13 points over ±3 SD weighted by the normal density (renormalised).
const DURATION_NODES = 8;
const FREQUENCY_NODES = 13;

/** Expected one-sided density of the burst train at fHz, µV²/Hz (see the derivation above). */
export function expectedBurstDensity(fHz: number, train: BurstTrain): number {
  const rate = train.perMinute / 60;
  if (rate === 0 || train.amplitudeUv === 0) return 0;
  const [dMin, dMax] = train.durationS;
  const sd = train.burstFrequencySdHz;
  let sum = 0;
  let weightSum = 0;
  for (let j = 0; j < FREQUENCY_NODES; j++) {
    const z = sd === 0 ? 0 : -3 + (6 * j) / (FREQUENCY_NODES - 1);
    const wz = Math.exp(-0.5 * z * z);
    const fb = train.centerHz + z * sd;
    for (let i = 0; i < DURATION_NODES; i++) {
      const d = dMin + ((i + 0.5) * (dMax - dMin)) / DURATION_NODES;
      const h = hannEnvelopeMagnitude(fHz - fb, d);
      sum += wz * h * h;
      weightSum += wz;
    }
    if (sd === 0) break;
  }
  return (rate * train.amplitudeUv * train.amplitudeUv * 0.5 * sum) / weightSum;
}

/** Adds one burst to x starting at sample `start` (samples past the end of x are dropped). */
export function addBurst(x: Float64Array, start: number, durationS: number, fsHz: number, amplitudeUv: number, frequencyHz: number, phase: number): void {
  const n = Math.round(durationS * fsHz);
  const end = Math.min(x.length, start + n);
  const w = (2 * Math.PI * frequencyHz) / fsHz;
  for (let i = start; i < end; i++) {
    const t = i - start;
    const s = Math.sin((Math.PI * t) / n);
    // A·sin²(πt/D)·cos(2πf·t + φ)
    x[i] += amplitudeUv * s * s * Math.cos(w * t + phase);
  }
}
