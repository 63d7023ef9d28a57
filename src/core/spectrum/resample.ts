import { SpectrumFitError } from './fit-error.ts';

/**
 * Rational resampling by up/down with a polyphase FIR filter, designed and aligned as
 * scipy.signal.resample_poly(x, up, down) does with its defaults (window ('kaiser', 5.0), zero
 * padding): after reducing up/down by their gcd, a linear-phase low-pass of 2·L + 1 taps,
 * L = 10·max(up, down), cutoff 1/max(up, down) of the Nyquist frequency, gain `up`; output length
 * ⌈n·up/down⌉. (Design from scipy's documentation and source as remembered; checked number for
 * number against scipy in tests/aperiodic/resample.test.ts.)
 */
export function resamplePoly(x: ArrayLike<number>, up: number, down: number): Float64Array {
  if (!(Number.isInteger(up) && up >= 1)) throw new SpectrumFitError(`resample: invalid up factor ${up}`);
  if (!(Number.isInteger(down) && down >= 1)) throw new SpectrumFitError(`resample: invalid down factor ${down}`);
  const g = gcd(up, down);
  const p = up / g;
  const q = down / g;
  const n = x.length;
  if (p === 1 && q === 1) return Float64Array.from(x);
  const nOut = Math.ceil((n * p) / q);
  const half = 10 * Math.max(p, q);
  const h = lowPass(2 * half + 1, 1 / Math.max(p, q), 5.0);
  for (let k = 0; k < h.length; k++) h[k] *= p;
  const y = new Float64Array(nOut);
  // y[m] = Σ_j x[j] · h[m·q + L − j·p]  (zero-stuff by p, filter, keep every q-th, centred on tap L)
  for (let m = 0; m < nOut; m++) {
    const t = m * q + half;
    const jHi = Math.min(n - 1, Math.floor(t / p));
    const jLo = Math.max(0, Math.ceil((t - (h.length - 1)) / p));
    let s = 0;
    for (let j = jLo; j <= jHi; j++) s += x[j] * h[t - j * p];
    y[m] = s;
  }
  return y;
}

/**
 * Windowed-sinc low-pass (window method, e.g. Oppenheim & Schafer, Discrete-Time Signal Processing,
 * §7.5): h[k] = c·sinc(c·(k − α))·w[k], α = (N − 1)/2, cutoff c as a fraction of Nyquist, Kaiser
 * window w[k] = I₀(β√(1 − ((k − α)/α)²))/I₀(β) (Kaiser 1974), scaled to unit gain at DC.
 */
export function lowPass(numTaps: number, cutoff: number, beta: number): Float64Array {
  const h = new Float64Array(numTaps);
  const alpha = (numTaps - 1) / 2;
  const i0Beta = besselI0(beta);
  let sum = 0;
  for (let k = 0; k < numTaps; k++) {
    const m = k - alpha;
    const arg = Math.PI * cutoff * m;
    const sinc = m === 0 ? 1 : Math.sin(arg) / arg;
    const r = alpha === 0 ? 0 : m / alpha;
    const w = besselI0(beta * Math.sqrt(Math.max(0, 1 - r * r))) / i0Beta;
    h[k] = cutoff * sinc * w;
    sum += h[k];
  }
  for (let k = 0; k < numTaps; k++) h[k] /= sum;
  return h;
}

// I₀(x) = Σ_k ((x/2)^k / k!)² (Abramowitz & Stegun 9.6.12), summed until the term is negligible
function besselI0(x: number): number {
  let term = 1;
  let sum = 1;
  const q = (x * x) / 4;
  for (let k = 1; k < 500 && term > 1e-17 * sum; k++) {
    term *= q / (k * k);
    sum += term;
  }
  return sum;
}

function gcd(a: number, b: number): number {
  while (b) [a, b] = [b, a % b];
  return a;
}

/** up/down with the smallest down ≤ maxDown that equals factor to 1e-9 (e.g. 1.15 → 23/20). */
export function rationalFactor(factor: number, maxDown = 100): { up: number; down: number } {
  if (!(factor > 0 && Number.isFinite(factor))) throw new SpectrumFitError(`resample: invalid factor ${factor}`);
  for (let down = 1; down <= maxDown; down++) {
    const up = Math.round(factor * down);
    if (up >= 1 && Math.abs(up / down - factor) < 1e-9) return { up, down };
  }
  throw new SpectrumFitError(`resample: factor ${factor} is not a ratio of integers with denominator ≤ ${maxDown}`);
}
