import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { modelLog10, type AperiodicParams, type PeakParams } from './aperiodic-model.ts';

/**
 * One bounded nonlinear least-squares fit of the whole spectral model (aperiodic part plus all
 * Gaussian peaks) to log10 power, step 4 of Donoghue et al. (2020, Nature Neuroscience
 * 23:1655–1665). Parameter vector layout:
 *   power-law: [offset, exponent, c₁, h₁, w₁, c₂, …]      knee: [offset, knee, exponent, c₁, h₁, w₁, …]
 *
 * Optimiser: ml-levenberg-marquardt 5.1.0 with the analytic Jacobian below. Its README and types
 * (node_modules/ml-levenberg-marquardt) document minValues/maxValues; its source applies them by
 * clipping every step to the box (a projected LM step), which suits this problem: start values
 * lie inside the box and a good fit's optimum is interior. The library has no relative-change
 * stop (only an absolute error floor), so it always runs maxIterations; the count below was set
 * from the agreement with scipy.optimize.curve_fit (tests/aperiodic/curve-fit.test.ts).
 * Its non-unit `weights` are not used (unit weights: ordinary least squares in log10 power).
 *
 * The library evaluates the model point by point; x is handed over as the bin index, so the whole
 * model and Jacobian are computed once per parameter vector into reused typed arrays.
 */
export type AperiodicMode = 'power-law' | 'knee';

export interface JointFitProblem {
  freqsHz: Float64Array;
  /** log10 power at freqsHz, log10(µV²/Hz). */
  log10Power: Float64Array;
  mode: AperiodicMode;
  start: Float64Array;
  lower: Float64Array;
  upper: Float64Array;
}

/**
 * LM settings: damping start λ = 1e-3; 10 iterations. Measured on 60 simulated spectra (power-law
 * and knee): after weak-peak removal, 10 iterations end within 1e-7 of a 200-iteration run in every
 * parameter (8 iterations: worst 3.5e-4; 6: 0.16).
 */
const DAMPING = 1e-3;
const MAX_ITERATIONS = 10;

const LN10 = Math.LN10;

/** Number of aperiodic parameters for a mode (2 or 3). */
export function aperiodicCount(mode: AperiodicMode): number {
  return mode === 'knee' ? 3 : 2;
}

/** Splits a parameter vector into the model's aperiodic and peak parameters. */
export function unpackParams(p: ArrayLike<number>, mode: AperiodicMode): { aperiodic: AperiodicParams; peaks: PeakParams[] } {
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
  const { freqsHz, log10Power, mode } = problem;
  const n = freqsHz.length;
  const nAp = aperiodicCount(mode);
  const nPar = problem.start.length;
  const index = new Float64Array(n);
  for (let i = 0; i < n; i++) index[i] = i;
  const fitted = new Float64Array(n);
  const evaluatedAt = new Float64Array(nPar).fill(NaN); // parameters of the model now in `fitted`
  const lnF = new Float64Array(n);
  for (let i = 0; i < n; i++) lnF[i] = Math.log(freqsHz[i]);
  const jac = new Float64Array(n * nPar); // row-major: jac[i·nPar + q] = ∂L(f_i)/∂p_q
  const partials = new Array<number>(nPar).fill(0);

  // the library asks twice for the model at each accepted point (error, then next step): compute once
  const model = (p: number[]) => {
    let same = true;
    for (let q = 0; q < nPar && same; q++) same = p[q] === evaluatedAt[q];
    if (!same) {
      const { aperiodic, peaks } = unpackParams(p, mode);
      modelLog10(freqsHz, aperiodic, peaks, fitted);
      evaluatedAt.set(p);
    }
    return (i: number): number => fitted[i];
  };

  const jacobian = (p: number[]) => {
    const knee = mode === 'knee' ? p[1] : 0;
    const exponent = mode === 'knee' ? p[2] : p[1];
    const ie = mode === 'knee' ? 2 : 1;
    for (let i = 0; i < n; i++) {
      const f = freqsHz[i];
      const row = i * nPar;
      // ∂L/∂b = 1; ∂L/∂k = −1/(ln10·(k + f^χ)); ∂L/∂χ = −f^χ·ln f/(ln10·(k + f^χ))
      const fx = Math.exp(exponent * lnF[i]);
      const denom = LN10 * (knee + fx);
      jac[row] = 1;
      if (mode === 'knee') jac[row + 1] = -1 / denom;
      jac[row + ie] = (-fx * lnF[i]) / denom;
      // with g = exp(−(f−c)²/(2w²)): ∂/∂c = h·g·(f−c)/w², ∂/∂h = g, ∂/∂w = h·g·(f−c)²/w³
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
    // the library copies each point's partials before asking for the next, so one array serves all
    return (i: number): number[] => {
      const row = i * nPar;
      for (let q = 0; q < nPar; q++) partials[q] = jac[row + q];
      return partials;
    };
  };

  const result = levenbergMarquardt({ x: index, y: log10Power }, model, {
    initialValues: Array.from(problem.start),
    minValues: Array.from(problem.lower),
    maxValues: Array.from(problem.upper),
    jacobianFunction: jacobian,
    damping: DAMPING,
    maxIterations: MAX_ITERATIONS,
    errorTolerance: 0,
  });
  return Float64Array.from(result.parameterValues);
}
