import { aperiodicLog10, modelLog10, type AperiodicParams } from './aperiodic-model.ts';
import { SpectrumFitError } from './fit-error.ts';
import { aperiodicCount, jointFit, unpackParams, type AperiodicForm, type JointFitProblem } from './joint-fit.ts';
import { FWHM_PER_SD, dropOverlappingPeaks, findPeaks } from './peaks.ts';
import { fitPowerLawLine } from './power-law-line.ts';

/**
 * Aperiodic (1/f) and peak decomposition of one power spectrum, following the published approach
 * of Donoghue et al. (2020, Nature Neuroscience 23:1655–1665). Model (aperiodic-model.ts), in
 * log10 power: L(f) = b − log10(k + f^χ) + Σ h·exp(−(f − c)²/(2w²)).
 * Steps: (1) robust initial aperiodic fit (fit, keep the points whose residual is below a
 * percentile, refit); (2) iterative peak search on the flattened spectrum; (3) edge and overlap
 * removal (peaks.ts); (4) one joint bounded least-squares fit of all parameters (joint-fit.ts),
 * repeated without any peak the fit shrank below peakMinHeight (its centre and width are then not
 * determined by the data) and without the lower of two fitted peaks that overlap by the rule of
 * step 3 (one peak split in two); (5) R² and RMSE of the full model
 * over the fit range. The defaults are our own choices for
 * 4-s Welch spectra of sleep EEG, not taken from any program.
 */
export interface SpectrumFitOptions {
  /** Frequency range fitted, Hz, both ends included (default [1, 40]). */
  fitRangeHz?: readonly [number, number];
  /** 'power-law' (knee fixed at 0) or 'knee' (knee k ≥ 0 fitted) (default 'power-law'). */
  aperiodicForm?: AperiodicForm;
  /** Bounds on each peak's Gaussian width w (standard deviation), Hz (default [0.5, 6]). */
  peakWidthHz?: readonly [number, number];
  /** Most peaks fitted (default 6). */
  maxPeaks?: number;
  /** Smallest peak height found, log10(µV²/Hz) above the aperiodic fit (default 0.05). */
  peakMinHeight?: number;
  /** Peak threshold, in robust SDs (1.4826 × MAD) of the flattened spectrum (default 2). */
  peakThresholdSd?: number;
  /** Peaks centred closer than this many widths w to an end of the fit range are dropped (default 1). */
  edgeGuardSd?: number;
  /** Peaks with centres closer than this × (w₁ + w₂) overlap; the lower one is dropped (default 1). */
  overlapSd?: number;
  /** Step 1 refit uses the points whose residual is below this percentile, 0–100 (default 40). */
  aperiodicPercentile?: number;
}

export interface FittedPeak {
  centerHz: number;
  /** Height above the aperiodic fit, log10(µV²/Hz). */
  height: number;
  /** Full width at half maximum of the Gaussian, Hz: 2·√(2 ln 2)·w ≈ 2.355·w. */
  bandwidthHz: number;
  /** Gaussian standard deviation w, Hz. */
  widthSdHz: number;
}

export interface SpectrumFit {
  /** b, log10(µV²/Hz). */
  offset: number;
  /** χ, dimensionless (power ∝ f^−χ). */
  exponent: number;
  /** k, Hz^χ (0 in power-law mode); knee frequency = k^(1/χ) Hz. */
  knee: number;
  peaks: FittedPeak[];
  /** 1 − SS_res/SS_tot of the full model in log10 power over the fit range. */
  r2: number;
  /** Root mean square error of the full model, log10 units. */
  rmse: number;
  fitLoHz: number;
  fitHiHz: number;
  method: 'fit';
}

interface ResolvedOptions {
  fitRangeHz: readonly [number, number];
  aperiodicForm: AperiodicForm;
  peakWidthHz: readonly [number, number];
  maxPeaks: number;
  peakMinHeight: number;
  peakThresholdSd: number;
  edgeGuardSd: number;
  overlapSd: number;
  aperiodicPercentile: number;
}

export const SPECTRUM_FIT_DEFAULTS: ResolvedOptions = {
  fitRangeHz: [1, 40],
  aperiodicForm: 'power-law',
  peakWidthHz: [0.5, 6],
  maxPeaks: 6,
  peakMinHeight: 0.05,
  peakThresholdSd: 2,
  edgeGuardSd: 1,
  overlapSd: 1,
  aperiodicPercentile: 40,
};

/** The start values and bounds of the joint fit after steps 1–3 (exported so tests can hand the same problem to a reference optimiser). */
export interface PreparedFit extends JointFitProblem {
  fitLoHz: number;
  fitHiHz: number;
}

/** Fits the aperiodic part and peaks of one spectrum (freqsHz in Hz, power in µV²/Hz, linear). */
export function fitSpectrum(freqsHz: ArrayLike<number>, power: ArrayLike<number>, options: SpectrumFitOptions = {}): SpectrumFit {
  const { problem, params } = solveSpectrum(freqsHz, power, options);
  return summarise(problem, params);
}

/** Steps 1–4: the final joint-fit problem (start values, bounds) and its fitted parameter vector. */
export function solveSpectrum(
  freqsHz: ArrayLike<number>,
  power: ArrayLike<number>,
  options: SpectrumFitOptions = {},
): { problem: PreparedFit; params: Float64Array; refits: number } {
  const minHeight = options.peakMinHeight ?? SPECTRUM_FIT_DEFAULTS.peakMinHeight;
  const overlapSd = options.overlapSd ?? SPECTRUM_FIT_DEFAULTS.overlapSd;
  let problem = prepareFit(freqsHz, power, options);
  let params = jointFit(problem);
  let refits = 0;
  // each pass drops at least one peak, so this ends after at most maxPeaks refits
  for (let next = withoutUnresolvedPeaks(problem, params, minHeight, overlapSd); next; next = withoutUnresolvedPeaks(problem, params, minHeight, overlapSd)) {
    problem = next;
    params = jointFit(problem);
    refits++;
  }
  return { problem, params, refits };
}

/**
 * The joint-fit problem without the fitted peaks that the data do not support: those lower than
 * minHeight, and the lower of two that overlap by the rule of step 3 (centres closer than
 * overlapSd · (w₁ + w₂)). The rest start from their fitted values; each kept centre's bounds are
 * re-centred on its fitted value (±2 fitted widths, inside the range), as in prepareFit, so a peak
 * can take over the place of a dropped neighbour. Null when every fitted peak stays.
 */
export function withoutUnresolvedPeaks(problem: PreparedFit, params: Float64Array, minHeight: number, overlapSd: number): PreparedFit | null {
  const nAp = aperiodicCount(problem.mode);
  const { peaks } = unpackParams(params, problem.mode);
  const strong = peaks.filter((p) => p.height >= minHeight);
  const resolved = new Set(dropOverlappingPeaks(strong, overlapSd));
  if (resolved.size === peaks.length) return null;
  const keep: number[] = [];
  for (let q = 0; q < nAp; q++) keep.push(q);
  peaks.forEach((p, j) => {
    if (resolved.has(p)) keep.push(nAp + 3 * j, nAp + 3 * j + 1, nAp + 3 * j + 2);
  });
  const pick = (a: Float64Array) => Float64Array.from(keep, (q) => a[q]);
  const start = pick(params);
  const lower = pick(problem.lower);
  const upper = pick(problem.upper);
  const f = problem.freqsHz;
  for (let q = nAp; q + 2 < start.length; q += 3) {
    lower[q] = Math.max(f[0], start[q] - 2 * start[q + 2]);
    upper[q] = Math.min(f[f.length - 1], start[q] + 2 * start[q + 2]);
  }
  return { ...problem, start, lower, upper };
}

/** Steps 1–3: checks the input, restricts it to the fit range, finds the start values and bounds. */
export function prepareFit(freqsHz: ArrayLike<number>, power: ArrayLike<number>, options: SpectrumFitOptions = {}): PreparedFit {
  const o = resolveOptions(options);
  const [lo, hi] = o.fitRangeHz;
  const { freqs, logPower } = selectRange(freqsHz, power, lo, hi);
  const mode = o.aperiodicForm;
  const initial = robustAperiodicFit(freqs, logPower, mode, o.aperiodicPercentile);
  const flattened = new Float64Array(freqs.length);
  for (let i = 0; i < freqs.length; i++) flattened[i] = logPower[i] - aperiodicLog10(freqs[i], initial);
  const peaks = findPeaks(freqs, flattened, {
    widthHz: o.peakWidthHz,
    maxPeaks: o.maxPeaks,
    minHeight: o.peakMinHeight,
    thresholdSd: o.peakThresholdSd,
    edgeGuardSd: o.edgeGuardSd,
    overlapSd: o.overlapSd,
  });
  const nAp = aperiodicCount(mode);
  const nPar = nAp + 3 * peaks.length;
  const start = new Float64Array(nPar);
  const lower = new Float64Array(nPar);
  const upper = new Float64Array(nPar);
  // aperiodic: offset and exponent free, knee k ≥ 0
  start[0] = initial.offset;
  lower[0] = -Infinity;
  upper[0] = Infinity;
  const ie = mode === 'knee' ? 2 : 1;
  start[ie] = initial.exponent;
  lower[ie] = -Infinity;
  upper[ie] = Infinity;
  if (mode === 'knee') {
    start[1] = initial.knee;
    lower[1] = 0;
    upper[1] = Infinity;
  }
  // peaks: centre within ±2 w of its start (and inside the range), height ≥ 0, width in peakWidthHz
  const [wMin, wMax] = o.peakWidthHz;
  for (let j = 0; j < peaks.length; j++) {
    const q = nAp + 3 * j;
    const p = peaks[j];
    start[q] = p.centerHz;
    lower[q] = Math.max(freqs[0], p.centerHz - 2 * p.widthHz);
    upper[q] = Math.min(freqs[freqs.length - 1], p.centerHz + 2 * p.widthHz);
    start[q + 1] = p.height;
    lower[q + 1] = 0;
    upper[q + 1] = Infinity;
    start[q + 2] = p.widthHz;
    lower[q + 2] = wMin;
    upper[q + 2] = wMax;
  }
  return { freqsHz: freqs, log10Power: logPower, mode, start, lower, upper, fitLoHz: lo, fitHiHz: hi };
}

/** Step 5 and the output record, from the joint fit's parameter vector. */
export function summarise(prepared: PreparedFit, params: ArrayLike<number>): SpectrumFit {
  const { aperiodic, peaks } = unpackParams(params, prepared.mode);
  const y = prepared.log10Power;
  const n = y.length;
  const fitted = modelLog10(prepared.freqsHz, aperiodic, peaks);
  let mean = 0;
  for (let i = 0; i < n; i++) mean += y[i];
  mean /= n;
  let ssRes = 0;
  let ssTot = 0;
  for (let i = 0; i < n; i++) {
    ssRes += (y[i] - fitted[i]) ** 2;
    ssTot += (y[i] - mean) ** 2;
  }
  return {
    offset: aperiodic.offset,
    exponent: aperiodic.exponent,
    knee: aperiodic.knee,
    peaks: peaks.map((p) => ({ centerHz: p.centerHz, height: p.height, bandwidthHz: FWHM_PER_SD * p.widthHz, widthSdHz: p.widthHz })),
    // R² = 1 − SS_res/SS_tot; a spectrum with no variance (SS_tot = 0) is fitted exactly or not at all
    r2: ssTot > 0 ? 1 - ssRes / ssTot : ssRes === 0 ? 1 : 0,
    rmse: Math.sqrt(ssRes / n),
    fitLoHz: prepared.fitLoHz,
    fitHiHz: prepared.fitHiHz,
    method: 'fit',
  };
}

function resolveOptions(options: SpectrumFitOptions): ResolvedOptions {
  const o: ResolvedOptions = { ...SPECTRUM_FIT_DEFAULTS, ...stripUndefined(options) };
  const [lo, hi] = o.fitRangeHz;
  if (!(Number.isFinite(lo) && Number.isFinite(hi) && lo > 0 && hi > lo)) {
    throw new SpectrumFitError(`fitRangeHz: invalid range [${lo}, ${hi}] Hz (need 0 < lo < hi)`);
  }
  if (o.aperiodicForm !== 'power-law' && o.aperiodicForm !== 'knee') {
    throw new SpectrumFitError(`aperiodicForm: invalid value '${String(o.aperiodicForm)}' (power-law or knee)`);
  }
  const [wMin, wMax] = o.peakWidthHz;
  if (!(wMin > 0 && wMax >= wMin && Number.isFinite(wMax))) throw new SpectrumFitError(`peakWidthHz: invalid bounds [${wMin}, ${wMax}] Hz`);
  if (!(Number.isInteger(o.maxPeaks) && o.maxPeaks >= 0)) throw new SpectrumFitError(`maxPeaks: invalid value ${o.maxPeaks}`);
  if (!(o.peakMinHeight >= 0)) throw new SpectrumFitError(`peakMinHeight: invalid value ${o.peakMinHeight}`);
  if (!(o.peakThresholdSd >= 0)) throw new SpectrumFitError(`peakThresholdSd: invalid value ${o.peakThresholdSd}`);
  if (!(o.edgeGuardSd >= 0)) throw new SpectrumFitError(`edgeGuardSd: invalid value ${o.edgeGuardSd}`);
  if (!(o.overlapSd >= 0)) throw new SpectrumFitError(`overlapSd: invalid value ${o.overlapSd}`);
  if (!(o.aperiodicPercentile > 0 && o.aperiodicPercentile <= 100)) {
    throw new SpectrumFitError(`aperiodicPercentile: invalid value ${o.aperiodicPercentile} (0 < p ≤ 100)`);
  }
  return o;
}

function stripUndefined<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}

/** The bins inside [lo, hi] Hz as Float64Arrays of frequency and log10 power; fails on bad values. */
function selectRange(freqsHz: ArrayLike<number>, power: ArrayLike<number>, lo: number, hi: number): { freqs: Float64Array; logPower: Float64Array } {
  if (freqsHz.length !== power.length) {
    throw new SpectrumFitError(`power: length ${power.length} differs from frequencies' length ${freqsHz.length}`);
  }
  for (let i = 1; i < freqsHz.length; i++) {
    if (!(freqsHz[i] > freqsHz[i - 1])) throw new SpectrumFitError(`frequencies: not strictly ascending at index ${i} (${freqsHz[i]} Hz)`);
  }
  let first = -1;
  let last = -1;
  for (let i = 0; i < freqsHz.length; i++) {
    if (freqsHz[i] >= lo && freqsHz[i] <= hi) {
      if (first < 0) first = i;
      last = i;
    }
  }
  const n = first < 0 ? 0 : last - first + 1;
  if (n === 0 || freqsHz[0] > lo || freqsHz[freqsHz.length - 1] < hi) {
    throw new SpectrumFitError(`fitRangeHz: [${lo}, ${hi}] Hz is not covered by the frequencies ${freqsHz[0]}–${freqsHz[freqsHz.length - 1]} Hz`);
  }
  if (n < 8) throw new SpectrumFitError(`fitRangeHz: only ${n} frequency bins in [${lo}, ${hi}] Hz (need at least 8)`);
  const freqs = new Float64Array(n);
  const logPower = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = power[first + i];
    if (!(v > 0) || !Number.isFinite(v)) {
      throw new SpectrumFitError(`power: value ${v} at ${freqsHz[first + i]} Hz is not a positive finite number (µV²/Hz)`);
    }
    freqs[i] = freqsHz[first + i];
    logPower[i] = Math.log10(v);
  }
  return { freqs, logPower };
}

/**
 * Step 1: fit the aperiodic part to all points, keep the points whose residual is at or below
 * the given percentile (the flat parts between peaks), refit to those.
 */
function robustAperiodicFit(freqs: Float64Array, logPower: Float64Array, mode: AperiodicForm, percentile: number): AperiodicParams {
  const first = aperiodicOnly(freqs, logPower, mode);
  const n = freqs.length;
  const residual = new Float64Array(n);
  for (let i = 0; i < n; i++) residual[i] = logPower[i] - aperiodicLog10(freqs[i], first);
  const cut = percentileOf(residual, percentile);
  let m = 0;
  for (let i = 0; i < n; i++) if (residual[i] <= cut) m++;
  if (m < aperiodicCount(mode) + 2) return first;
  const f = new Float64Array(m);
  const y = new Float64Array(m);
  for (let i = 0, j = 0; i < n; i++) {
    if (residual[i] <= cut) {
      f[j] = freqs[i];
      y[j] = logPower[i];
      j++;
    }
  }
  return aperiodicOnly(f, y, mode);
}

/** The aperiodic part alone: a straight line in log-log (power-law) or a 3-parameter fit (knee). */
function aperiodicOnly(freqs: Float64Array, logPower: Float64Array, mode: AperiodicForm): AperiodicParams {
  const line = fitPowerLawLine(freqs, logPower);
  if (mode === 'power-law') return line;
  // knee start: knee frequency at the geometric centre of the range, k = f_k^χ
  // (the line meets the knee curve there when b = b_line + log10 2)
  const fk = Math.sqrt(freqs[0] * freqs[freqs.length - 1]);
  const exponent = Math.max(line.exponent, 0.5);
  const p = jointFit({
    freqsHz: freqs,
    log10Power: logPower,
    mode: 'knee',
    start: Float64Array.of(line.offset + Math.log10(2), Math.pow(fk, exponent), exponent),
    lower: Float64Array.of(-Infinity, 0, -Infinity),
    upper: Float64Array.of(Infinity, Infinity, Infinity),
  });
  return { offset: p[0], knee: p[1], exponent: p[2] };
}

// percentile with linear interpolation between order statistics (R-7 / numpy default, Hyndman & Fan 1996)
function percentileOf(values: Float64Array, p: number): number {
  const s = Float64Array.from(values).sort();
  const h = ((s.length - 1) * p) / 100;
  const i = Math.floor(h);
  return i + 1 < s.length ? s[i] + (h - i) * (s[i + 1] - s[i]) : s[i];
}
