/**
 * Robustness across analysis paths: a path is one set of analysis choices; the band contrast is
 * run for every combination of the choices the user varies, and the results form a
 * specification curve (Simonsohn, Simmons & Nelson 2020, Nature Human Behaviour 4:1208–1214):
 * effect sizes sorted with their intervals, the choices of each path, the significant paths
 * marked and their share stated.
 *
 * Choices that can vary: measure (absolute log10 band power; log10 relative band power with one
 * or more denominator ranges; residual above the aperiodic fit averaged over the band), reference,
 * epoch averaging and spectral estimator (Welch or multitaper; each a separately stored set of
 * spectra), band power summary (mean density or trapezoid integral), aperiodic fit range (only
 * ranges stored in the database), band edges, and band definition (fixed edges, or individual:
 * centred on each subject's fitted peak, src/core/contrast/individual-bands.ts; the edge variants
 * then widen or narrow the half-width by the same amount, the search range stays the given band's
 * or the contrast's). A choice that does not apply to a measure is not varied for it, so no path is
 * counted twice: the summary applies to absolute power only (relative power is a ratio of
 * integrals — a ratio of mean densities differs by a constant factor, which leaves the effect
 * size unchanged — and the residual is a mean of log values), the fit range to the residual only.
 *
 * Two ways to test a path (one stage, channel average over the contrast's channels):
 *  'band-summary' (default): one band summary per subject, tested with the band check's
 *    one-point permutation test (scalar-test.ts); effect and p belong to that summary.
 *  'frequency-wise': the spectral form of the measure (log10 PSD, log10 relative PSD, residual)
 *    at every bin of the band, cluster-mass permutation over neighbouring bins as in compare;
 *    the path's p is the smallest cluster p (1 when no cluster forms); its effect is that of the
 *    band mean of the same spectral measure (no summary choice then: log10 of each bin).
 * Band definition applies to the band-summary test only (the frequency-wise test reads the fixed
 * band's bins). Only the rows differ by reference, averaging, estimator and fit range: the caller
 * passes one data set for each, with its fitted peaks when individual bands are asked for.
 *
 * Decision (choices.decisions, default power only): 'power' decides a path on its power measure
 * alone; 'power-and-frequency' also tests the centre of the band's highest fitted peak (the band
 * check's frequency test, peak-center.ts, on the same data set and band edges) and decides on
 * both, Bonferroni-corrected: p = min(1, 2·min(p_power, p_centre)). The curve's effect stays the
 * power measure's; the centre's effect is reported beside it. A data set without fitted peaks
 * cannot decide on frequency.
 */
import type { BandDefinition, Contrast, EstimatorName } from '../contrast/spec.ts';
import type { ContrastData } from '../contrast/data.ts';
import { individualBands } from '../contrast/individual-bands.ts';
import { checkBand, type Band, type BandMethod } from '../spectrum/bands.ts';
import { compare } from '../contrast/run.ts';
import { assembleAveraged, bandMean, reduce, rowMean, runScalarTest, scalarEffect, type ScalarTest } from './scalar-test.ts';
import { peakValues } from './peak-center.ts';

export type PathMeasure = 'absolute' | 'relative' | 'residual';
/** what a path is decided on: its power measure, or that and the peak centre (Bonferroni over the two) */
export type PathDecision = 'power' | 'power-and-frequency';
export const PATH_DECISIONS: readonly PathDecision[] = ['power', 'power-and-frequency'];
export type Averaging = 'mean' | 'median';

/** Rows of one (reference, averaging, estimator) as stored, with the fit range of their aperiodic fits. */
export interface PathDataSet {
  reference: string;
  averaging: Averaging;
  /** default 'welch' */
  estimator?: EstimatorName;
  /** aperiodic fit range of data.aperiodic, Hz (null: no fits in this set) */
  fitRangeHz: [number, number] | null;
  data: ContrastData;
}

export interface PathChoices {
  measures: PathMeasure[];
  /** denominator ranges of the relative measure, Hz */
  relativeDenominatorsHz: [number, number][];
  references: string[];
  averagings: Averaging[];
  /** band power summary of the absolute measure */
  summaries: BandMethod[];
  /** aperiodic fit ranges of the residual measure (each must be stored) */
  fitRangesHz: [number, number][];
  /** band edge variants (edgeVariants gives ±1 Hz) */
  bands: Band[];
  /** what each path is decided on (default ['power']) */
  decisions?: PathDecision[];
  /** spectral estimators (default ['welch']) */
  estimators?: EstimatorName[];
  /** band definitions (default ['fixed']); individual needs the data sets' peaks */
  bandDefinitions?: BandDefinition[];
}

export interface PathSpec {
  id: number;
  measure: PathMeasure;
  denominatorHz: [number, number] | null;
  reference: string;
  averaging: Averaging;
  estimator: EstimatorName;
  summary: BandMethod | null;
  fitRangeHz: [number, number] | null;
  band: Band;
  bandDefinition: BandDefinition;
  decision: PathDecision;
  /** the path's measure in words */
  description: string;
}

/** The peak-centre test of a path decided on power and frequency. */
export interface PathFrequency {
  effect: number;
  ciLow: number;
  ciHigh: number;
  /** group 1 − group 0 mean centre, Hz (null for a correlation, or when not tested) */
  differenceHz: number | null;
  p: number;
  n: Record<string, number>;
  withoutPeak: Record<string, number>;
  /** why the test did not run (too few subjects with a peak); it then counts as p = 1 */
  skipped: string | null;
}

export interface PathResult extends PathSpec {
  effect: number;
  ciLow: number;
  ciHigh: number;
  effectKind: ScalarTest['effectKind'];
  /** the power test's p ('power'), or the Bonferroni-adjusted p over power and centre ('power-and-frequency') */
  p: number;
  significant: boolean;
  n: Record<string, number>;
  /** the peak-centre test (only on 'power-and-frequency' paths) */
  frequency?: PathFrequency;
  /** position on the curve, 1 = smallest effect */
  rank: number;
}

export interface SpecificationCurve {
  kind: 'robustness';
  contrast: Contrast;
  band: Band;
  /** sorted by effect size, smallest first */
  paths: PathResult[];
  nPaths: number;
  nSignificant: number;
  shareSignificant: number;
  /** paths with p < α whose effect has the sign of the median effect */
  nSignificantMajoritySign: number;
  medianEffect: number;
  alpha: number;
  permutations: number;
  seed: number;
  test: PathTest;
  /** the values each choice took */
  choices: PathChoices;
  notes: string[];
}

export class PathError extends Error {
  override name = 'PathError';
}

/** Band edges moved by ±shiftHz: wider on both sides, as given, narrower on both sides. */
export function edgeVariants(band: Band, shiftHz = 1): Band[] {
  checkBand(band);
  const out = [{ ...band, loHz: Math.max(0, band.loHz - shiftHz), hiHz: band.hiHz + shiftHz }, { ...band }];
  if (band.hiHz - band.loHz > 2 * shiftHz) out.push({ ...band, loHz: band.loHz + shiftHz, hiHz: band.hiHz - shiftHz });
  return out;
}

const sameRange = (a: readonly number[] | null, b: readonly number[] | null) =>
  a !== null && b !== null && Math.abs(a[0] - b[0]) < 1e-9 && Math.abs(a[1] - b[1]) < 1e-9;

/** The distinct fit ranges stored in the data sets (for the choice of fit ranges). */
export function availableFitRanges(sets: readonly PathDataSet[]): [number, number][] {
  const out: [number, number][] = [];
  for (const s of sets) if (s.fitRangeHz && !out.some((r) => sameRange(r, s.fitRangeHz))) out.push([...s.fitRangeHz]);
  return out;
}

export type PathTest = 'band-summary' | 'frequency-wise';

/** Every combination of the choices, a choice that does not apply to a measure taken once. */
export function enumeratePaths(choices: PathChoices, test: PathTest = 'band-summary'): PathSpec[] {
  const out: PathSpec[] = [];
  for (const k of ['measures', 'references', 'averagings', 'bands'] as const)
    if (choices[k].length === 0) throw new PathError(`choices.${k}: at least one value is needed`);
  for (const band of choices.bands) checkBand(band);
  const decisions = choices.decisions ?? ['power'];
  if (decisions.length === 0) throw new PathError('choices.decisions: at least one value is needed');
  for (const d of decisions) if (!PATH_DECISIONS.includes(d)) throw new PathError(`choices.decisions: ${d} is not one of ${PATH_DECISIONS.join(', ')}`);
  const estimators = choices.estimators ?? ['welch'];
  if (estimators.length === 0) throw new PathError('choices.estimators: at least one value is needed');
  const definitions = test === 'band-summary' ? (choices.bandDefinitions ?? ['fixed']) : ['fixed' as const];
  if (definitions.length === 0) throw new PathError('choices.bandDefinitions: at least one value is needed');
  for (const measure of choices.measures) {
    const denominators: ([number, number] | null)[] = measure === 'relative' ? choices.relativeDenominatorsHz : [null];
    const summaries: (BandMethod | null)[] = measure === 'absolute' && test === 'band-summary' ? choices.summaries : [null];
    const fitRanges: ([number, number] | null)[] = measure === 'residual' ? choices.fitRangesHz : [null];
    if (denominators.length === 0) throw new PathError('choices.relativeDenominatorsHz: the relative measure needs at least one denominator range');
    if (summaries.length === 0) throw new PathError('choices.summaries: the absolute measure needs a band power summary');
    if (fitRanges.length === 0) throw new PathError('choices.fitRangesHz: the residual measure needs a fit range');
    for (const reference of choices.references)
      for (const averaging of choices.averagings)
        for (const estimator of estimators)
          for (const denominatorHz of denominators)
            for (const summary of summaries)
              for (const fitRangeHz of fitRanges)
                for (const band of choices.bands)
                  for (const bandDefinition of definitions)
                    for (const decision of decisions) {
                      const edges = bandDefinition === 'fixed' ? `${band.loHz}–${band.hiHz} Hz` : `the individual band (fixed ${band.loHz}–${band.hiHz} Hz)`;
                      const description =
                        measure === 'absolute'
                          ? summary
                            ? `log10 band power (${summary === 'mean' ? 'mean density' : 'trapezoid integral'}) ${edges}`
                            : `log10 PSD at each bin of ${edges}`
                          : measure === 'relative'
                            ? test === 'band-summary'
                              ? `log10 relative band power ${edges} / ${denominatorHz![0]}–${denominatorHz![1]} Hz`
                              : `log10 relative PSD (over the ${denominatorHz![0]}–${denominatorHz![1]} Hz integral) at each bin of ${edges}`
                            : `residual ${test === 'band-summary' ? 'averaged over' : 'at each bin of'} ${edges} (fit ${fitRangeHz![0]}–${fitRangeHz![1]} Hz)`;
                      const decided = decision === 'power' ? '' : '; decided on power and the peak centre (Bonferroni ×2)';
                      out.push({
                        id: out.length + 1,
                        measure,
                        denominatorHz,
                        reference,
                        averaging,
                        estimator,
                        summary,
                        fitRangeHz,
                        band,
                        bandDefinition,
                        decision,
                        description: `${description}; ${reference}, ${averaging}, ${estimator}${decided}`,
                      });
                    }
  }
  return out;
}

/** The (reference, averaging, estimator) data sets the choices need: the caller loads rows for each. */
export function pathDataNeeds(choices: PathChoices): { reference: string; averaging: Averaging; estimator: EstimatorName }[] {
  const estimators = choices.estimators ?? ['welch'];
  return choices.references.flatMap((reference) =>
    choices.averagings.flatMap((averaging) => estimators.map((estimator) => ({ reference, averaging, estimator }))),
  );
}

export interface PathRunOptions {
  /** permutations per path (default: the contrast's) */
  permutations?: number;
  /** significance level of each path (default 0.05) */
  alpha?: number;
  /** how each path is tested (default 'band-summary') */
  test?: PathTest;
  onProgress?: (done: number, total: number) => void;
}

function findSet(sets: readonly PathDataSet[], p: PathSpec): PathDataSet {
  const candidates = sets.filter((s) => s.reference === p.reference && s.averaging === p.averaging && (s.estimator ?? 'welch') === p.estimator);
  if (candidates.length === 0)
    throw new PathError(
      `no data set for reference ${p.reference}, averaging ${p.averaging}, estimator ${p.estimator} (have: ${sets.map((s) => `${s.reference}/${s.averaging}/${s.estimator ?? 'welch'}`).join(', ')})`,
    );
  if (p.measure !== 'residual') return candidates[0];
  const hit = candidates.find((s) => sameRange(s.fitRangeHz, p.fitRangeHz));
  if (!hit) {
    const have =
      availableFitRanges(candidates)
        .map((r) => `${r[0]}–${r[1]} Hz`)
        .join(', ') || 'none';
    throw new PathError(`aperiodic fit range ${p.fitRangeHz![0]}–${p.fitRangeHz![1]} Hz is not stored for ${p.reference}/${p.averaging} (stored: ${have})`);
  }
  return hit;
}

/**
 * The contrast of a path: its reference, averaging, estimator and band definition; an individual
 * band keeps the search range of the band as given (or the contrast's) across the edge variants,
 * and the variants widen or narrow its half-width.
 */
function pathContrast(c: Contrast, p: PathSpec, given: Band): Contrast {
  const base: Contrast = {
    ...c,
    reference: p.reference as Contrast['reference'],
    averaging: p.averaging,
    estimator: p.estimator,
    bandDefinition: p.bandDefinition,
  };
  if (p.bandDefinition === 'fixed') return base;
  const half = (c.halfWidthHz ?? (given.hiHz - given.loHz) / 2) + (p.band.hiHz - p.band.loHz - (given.hiHz - given.loHz)) / 2;
  return { ...base, peakSearchHz: c.peakSearchHz ?? [given.loHz, given.hiHz], halfWidthHz: Math.max(half, 1e-6) };
}

function pathValues(c: Contrast, p: PathSpec, data: ContrastData, given: Band) {
  const base = pathContrast(c, p, given);
  if (p.measure === 'absolute')
    return reduce(p.description, assembleAveraged(base, data, { measure: 'band-power', bands: [p.band], bandMethod: p.summary! }), (r) => r[0]);
  if (p.measure === 'relative')
    return reduce(
      p.description,
      assembleAveraged(base, data, { measure: 'relative-band-power', bands: [p.band], relativeRangeHz: p.denominatorHz! }),
      (r) => r[0],
    );
  if (p.bandDefinition === 'fixed')
    return reduce(p.description, assembleAveraged(base, data, { measure: 'residual', fminHz: p.band.loHz, fmaxHz: p.band.hiHz }), rowMean);
  // the residual over each subject's own band: read over the span of all of them, then each subject's bins averaged
  const own = individualBands(base, data, p.band);
  let lo = p.band.loHz;
  let hi = p.band.hiHz;
  for (const per of own.bands.values()) for (const b of per) [lo, hi] = [Math.min(lo, b.loHz), Math.max(hi, b.hiHz)];
  if (p.fitRangeHz) [lo, hi] = [Math.max(lo, p.fitRangeHz[0]), Math.min(hi, p.fitRangeHz[1])];
  const a = assembleAveraged(base, data, { measure: 'residual', fminHz: lo, fmaxHz: hi });
  return reduce(p.description, a, (r, subject, cond) => {
    const b = own.bands.get(subject)?.[cond] ?? p.band;
    return bandMean(r, a.input.freqsHz, b.loHz, b.hiHz);
  });
}

/** The frequency-wise contrast of a path: its spectral measure over the band's bins, cluster mass. */
function spectralContrast(c: Contrast, p: PathSpec, permutations: number): Contrast {
  const measure = p.measure === 'absolute' ? 'log-psd' : p.measure;
  return {
    ...c,
    reference: p.reference as Contrast['reference'],
    averaging: p.averaging,
    estimator: p.estimator,
    bandDefinition: 'fixed',
    measure,
    fminHz: p.band.loHz,
    fmaxHz: p.band.hiHz,
    relativeRangeHz: p.denominatorHz ?? c.relativeRangeHz,
    channelAverage: true,
    correction: 'cluster-mass',
    permutations,
  };
}

/**
 * Every choice the data allow: all three measures, relative power over the contrast's denominator
 * and over its analysis range (fminHz–fmaxHz), every stored reference, averaging and estimator,
 * both summaries, every stored fit range, band edges ±1 Hz, fixed and (with fitted peaks) individual bands.
 */
export function defaultPathChoices(c: Contrast, band: Band, sets: readonly PathDataSet[]): PathChoices {
  const second: [number, number] = [c.fminHz, c.fmaxHz];
  return {
    measures: ['absolute', 'relative', 'residual'],
    relativeDenominatorsHz: sameRange(c.relativeRangeHz, second) ? [[...c.relativeRangeHz]] : [[...c.relativeRangeHz], second],
    references: [...new Set(sets.map((s) => s.reference))],
    averagings: [...new Set(sets.map((s) => s.averaging))],
    summaries: ['mean', 'integral'],
    fitRangesHz: availableFitRanges(sets),
    bands: edgeVariants(band),
    estimators: [...new Set(sets.map((s) => s.estimator ?? 'welch'))],
    bandDefinitions: sets.some((s) => s.data.peaks.length > 0) ? ['fixed', 'individual'] : ['fixed'],
  };
}

/** The peak-centre test of a path (the band check's frequency test on the path's rows and band). */
function frequencyTest(
  c: Contrast,
  p: PathSpec,
  data: ContrastData,
  given: Band,
  so: { statistic: Contrast['statistic']; permutations: number; seed: number },
): PathFrequency {
  const base = { ...pathContrast(c, p, given), bandDefinition: 'fixed' as const };
  // an individual band's peak is looked for in its search range
  const where = p.bandDefinition === 'individual' ? { name: p.band.name, loHz: base.peakSearchHz![0], hiHz: base.peakSearchHz![1] } : p.band;
  const v = peakValues(base, data, where, c.channels === 'all' ? 'the channels' : c.channels.join(', '));
  const s = v.summary;
  if (!v.center) return { effect: NaN, ciLow: NaN, ciHigh: NaN, differenceHz: null, p: 1, n: s.withPeak, withoutPeak: s.withoutPeak, skipped: s.skipped };
  const t = runScalarTest(v.center, so);
  return { effect: t.effect, ciLow: t.ciLow, ciHigh: t.ciHigh, differenceHz: t.difference, p: t.p, n: t.n, withoutPeak: s.withoutPeak, skipped: null };
}

/** Runs every path and returns the specification curve; `band` is the band as given (its variants are in choices.bands). */
export function runPaths(
  contrastBase: Contrast,
  band: Band,
  choices: PathChoices,
  sets: readonly PathDataSet[],
  options: PathRunOptions = {},
): SpecificationCurve {
  const alpha = options.alpha ?? 0.05;
  const permutations = options.permutations ?? contrastBase.permutations;
  const test = options.test ?? 'band-summary';
  const specs = enumeratePaths(choices, test);
  const notes: string[] = [];
  if (choices.measures.includes('residual')) {
    const stored = availableFitRanges(sets);
    if (stored.length < 2)
      notes.push(
        `aperiodic fit range not varied: the database stores ${stored.length === 0 ? 'no fit' : `one fit range (${stored[0][0]}–${stored[0][1]} Hz)`}`,
      );
  }
  const so = { statistic: contrastBase.statistic, permutations, seed: contrastBase.seed };
  // a path decided on both shares its power test with its power-only twin, and its centre test with every path of the same data set and band
  const powerTests = new Map<string, Pick<ScalarTest, 'effect' | 'ciLow' | 'ciHigh' | 'effectKind' | 'p' | 'n'>>();
  const frequencyTests = new Map<PathDataSet, Map<string, PathFrequency>>();
  const results: PathResult[] = specs.map((p, i) => {
    const set = findSet(sets, p);
    const data = set.data;
    const powerKey = JSON.stringify([p.measure, p.denominatorHz, p.reference, p.averaging, p.estimator, p.summary, p.fitRangeHz, p.band, p.bandDefinition]);
    let t = powerTests.get(powerKey);
    if (!t) {
      if (p.bandDefinition === 'individual' && data.peaks.length === 0)
        throw new PathError(
          `no fitted peaks in the data set for reference ${p.reference}, averaging ${p.averaging}, estimator ${p.estimator}: individual bands need the stored peaks`,
        );
      if (test === 'band-summary') t = runScalarTest(pathValues(contrastBase, p, data, band), so);
      else {
        const fc = spectralContrast(contrastBase, p, permutations);
        const clusters = compare(fc, data).clusters;
        const mean = reduce(p.description, assembleAveraged(fc, data, {}), rowMean);
        t = { ...scalarEffect(mean, so), p: clusters.length > 0 ? Math.min(...clusters.map((k) => k.p)) : 1 };
      }
      powerTests.set(powerKey, t);
    }
    let frequency: PathFrequency | null = null;
    if (p.decision === 'power-and-frequency') {
      if (data.peaks.length === 0)
        throw new PathError(
          `no fitted peaks in the data set for reference ${p.reference}, averaging ${p.averaging}: a path decided on frequency needs the stored peaks`,
        );
      const byBand = frequencyTests.get(set) ?? new Map<string, PathFrequency>();
      frequencyTests.set(set, byBand);
      const bandKey = `${p.band.loHz}-${p.band.hiHz}-${p.bandDefinition}`;
      frequency = byBand.get(bandKey) ?? frequencyTest(contrastBase, p, data, band, so);
      byBand.set(bandKey, frequency);
    }
    // Bonferroni over the two tests of a path decided on power and frequency
    const pathP = frequency ? Math.min(1, 2 * Math.min(t.p, frequency.p)) : t.p;
    options.onProgress?.(i + 1, specs.length);
    return {
      ...p,
      effect: t.effect,
      ciLow: t.ciLow,
      ciHigh: t.ciHigh,
      effectKind: t.effectKind,
      p: pathP,
      significant: pathP < alpha,
      n: t.n,
      ...(frequency ? { frequency } : {}),
      rank: 0,
    };
  });
  results.sort((a, b) => a.effect - b.effect || a.id - b.id);
  results.forEach((r, i) => (r.rank = i + 1));
  const mid =
    results.length % 2 === 1 ? results[(results.length - 1) / 2].effect : (results[results.length / 2 - 1].effect + results[results.length / 2].effect) / 2;
  const nSignificant = results.filter((r) => r.significant).length;
  return {
    kind: 'robustness',
    contrast: contrastBase,
    band: { ...band },
    paths: results,
    nPaths: results.length,
    nSignificant,
    shareSignificant: nSignificant / results.length,
    nSignificantMajoritySign: results.filter((r) => r.significant && Math.sign(r.effect) === Math.sign(mid)).length,
    medianEffect: mid,
    alpha,
    permutations,
    seed: contrastBase.seed,
    test,
    choices,
    notes,
  };
}
