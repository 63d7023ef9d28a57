import type { AperiodicParams, PeakParams } from './aperiodic-model.ts';
import { boundedLeastSquares } from './bounded-least-squares.ts';

/**
 * One bounded nonlinear least-squares fit of the whole spectral model (aperiodic part plus all
 * Gaussian peaks) to log10 power, step 4 of Donoghue et al. (2020, Nature Neuroscience
 * 23:1655–1665), by the bounded Levenberg–Marquardt solver in bounded-least-squares.ts (which
 * says why ml-levenberg-marquardt is not used) with the analytic Jacobian below.
 * Parameter vector layout:
 *   power-law: [offset, exponent, c₁, h₁, w₁, c₂, …]      knee: [offset, knee, exponent, c₁, h₁, w₁, …]
 */
export type AperiodicForm = 'power-law' | 'knee';

export interface JointFitProblem {
  freqsHz: Float64Array;
  /** log10 power at freqsHz, log10(µV²/Hz). */
  log10Power: Float64Array;
  mode: AperiodicForm;
  start: Float64Array;
  lower: Float64Array;
  upper: Float64Array;
}

const LN10 = Math.LN10;

/** Number of aperiodic parameters for a mode (2 or 3). */
export function aperiodicCount(mode: AperiodicForm): number {
  return mode === 'knee' ? 3 : 2;
}

/** Splits a parameter vector into the model's aperiodic and peak parameters. */
export function unpackParams(p: ArrayLike<number>, mode: AperiodicForm): { aperiodic: AperiodicParams; peaks: PeakParams[] } {
  const knee = mode === 'knee';
  const aperiodic = { offset: p[0], knee: knee ? p[1] : 0, exponent: knee ? p[2] : p[1] };
  const peaks: PeakParams[] = [];
  for (let j = aperiodicCount(mode); j + 2 < p.length; j += 3) {
    peaks.push({ centerHz: p[j], height: p[j + 1], widthHz: p[j + 2] });
  }
  return { aperiodic, peaks };
}

/**
 * Fits the model; returns the final parameter vector (same layout as start).
 * The model is evaluated here, term for term as modelLog10 does, so that the peaks' Gaussian
 * factors g of the last evaluation can serve the Jacobian at the same parameters (the solver asks
 * for the Jacobian at the point it evaluated last), instead of being computed a second time.
 */
export function jointFit(problem: JointFitProblem): Float64Array {
  const { freqsHz, mode } = problem;
  const n = freqsHz.length;
  const nAp = aperiodicCount(mode);
  const nPar = problem.start.length;
  const nPeaks = Math.floor((nPar - nAp) / 3);
  const lnF = new Float64Array(n);
  for (let i = 0; i < n; i++) lnF[i] = Math.log(freqsHz[i]);
  const ie = mode === 'knee' ? 2 : 1;
  // g of peak j at bin i, gauss[j·n + i], as evaluated by the model at the parameters gaussAt
  const gauss = new Float64Array(nPeaks * n);
  const gaussAt = new Float64Array(nPar).fill(NaN);

  const result = boundedLeastSquares({
    y: problem.log10Power,
    start: problem.start,
    lower: problem.lower,
    upper: problem.upper,
    model(p, out) {
      const offset = p[0];
      const knee = mode === 'knee' ? p[1] : 0;
      const exponent = p[ie];
      for (let i = 0; i < n; i++) {
        const f = freqsHz[i];
        // L(f) = b − log10(k + f^χ) + Σ_j h_j·exp(−(f − c_j)²/(2w_j²)) (aperiodic-model.ts)
        let v = offset - Math.log10(knee + Math.pow(f, exponent));
        for (let j = 0; j < nPeaks; j++) {
          const q = nAp + 3 * j;
          const d = f - p[q];
          const w = p[q + 2];
          const g = Math.exp((-d * d) / (2 * w * w));
          gauss[j * n + i] = g;
          v += p[q + 1] * g;
        }
        out[i] = v;
      }
      gaussAt.set(p);
    },
    jacobian(p, jac) {
      const knee = mode === 'knee' ? p[1] : 0;
      const exponent = p[ie];
      for (let i = 0; i < n; i++) {
        // ∂L/∂b = 1; ∂L/∂k = −1/(ln10·(k + f^χ)); ∂L/∂χ = −f^χ·ln f/(ln10·(k + f^χ))
        const fx = Math.exp(exponent * lnF[i]);
        const denom = LN10 * (knee + fx);
        jac[i] = 1;
        if (mode === 'knee') jac[n + i] = -1 / denom;
        jac[ie * n + i] = (-fx * lnF[i]) / denom;
      }
      let cached = true;
      for (let q = 0; q < nPar; q++) if (gaussAt[q] !== p[q]) cached = false;
      // with g = exp(−(f−c)²/(2w²)): ∂/∂c = h·g·(f−c)/w², ∂/∂h = g, ∂/∂w = h·g·(f−c)²/w³
      for (let j = 0; j < nPeaks; j++) {
        const q = nAp + 3 * j;
        const c = p[q];
        const h = p[q + 1];
        const w = p[q + 2];
        const w2 = w * w;
        const w3 = w2 * w;
        const cc = q * n;
        for (let i = 0; i < n; i++) {
          const d = freqsHz[i] - c;
          const g = cached ? gauss[j * n + i] : Math.exp((-d * d) / (2 * w * w));
          const hgd = h * g * d;
          jac[cc + i] = hgd / w2;
          jac[cc + n + i] = g;
          jac[cc + 2 * n + i] = (hgd * d) / w3;
        }
      }
    },
  });
  return result.params;
}
