import { modelLog10, type AperiodicParams, type PeakParams } from './aperiodic-model.ts';
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

/** Fits the model; returns the final parameter vector (same layout as start). */
export function jointFit(problem: JointFitProblem): Float64Array {
  const { freqsHz, mode } = problem;
  const n = freqsHz.length;
  const nAp = aperiodicCount(mode);
  const nPar = problem.start.length;
  const lnF = new Float64Array(n);
  for (let i = 0; i < n; i++) lnF[i] = Math.log(freqsHz[i]);
  const ie = mode === 'knee' ? 2 : 1;

  const result = boundedLeastSquares({
    y: problem.log10Power,
    start: problem.start,
    lower: problem.lower,
    upper: problem.upper,
    model(p, out) {
      const { aperiodic, peaks } = unpackParams(p, mode);
      modelLog10(freqsHz, aperiodic, peaks, out);
    },
    jacobian(p, jac) {
      const knee = mode === 'knee' ? p[1] : 0;
      const exponent = p[ie];
      for (let i = 0; i < n; i++) {
        const row = i * nPar;
        // ∂L/∂b = 1; ∂L/∂k = −1/(ln10·(k + f^χ)); ∂L/∂χ = −f^χ·ln f/(ln10·(k + f^χ))
        const fx = Math.exp(exponent * lnF[i]);
        const denom = LN10 * (knee + fx);
        jac[row] = 1;
        if (mode === 'knee') jac[row + 1] = -1 / denom;
        jac[row + ie] = (-fx * lnF[i]) / denom;
        // with g = exp(−(f−c)²/(2w²)): ∂/∂c = h·g·(f−c)/w², ∂/∂h = g, ∂/∂w = h·g·(f−c)²/w³
        const f = freqsHz[i];
        for (let q = nAp; q + 2 < nPar; q += 3) {
          const d = f - p[q];
          const h = p[q + 1];
          const w = p[q + 2];
          const g = Math.exp((-d * d) / (2 * w * w));
          jac[row + q] = (h * g * d) / (w * w);
          jac[row + q + 1] = g;
          jac[row + q + 2] = (h * g * d * d) / (w * w * w);
        }
      }
    },
  });
  return result.params;
}
