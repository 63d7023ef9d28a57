/**
 * The band check: is an effect in a band band-specific, or a broadband aperiodic change seen
 * through the band? For one channel set (averaged) and the contrast's design, every quantity is
 * one value per subject tested with the same permutation machinery (scalar-test.ts); the
 * verdict follows the rules in rules.ts. Pure: the caller provides the rows (ContrastData) and
 * the aperiodic fit range stored with them.
 */
import { uniqueExclusions } from '../contrast/exclusions.ts';
import type { Contrast } from '../contrast/spec.ts';
import type { ContrastData, Exclusion } from '../contrast/data.ts';
import { compare, RESEARCH_NOTE, type CompareCluster } from '../contrast/run.ts';
import { bandBins, checkBand, type Band } from '../spectrum/bands.ts';
import type { PermutationTestResult } from '../stats/index.ts';
import { assembleAveraged, bandMean, combine, reduce, rowMean, runScalarTest, type ScalarTest, type ScalarValues } from './scalar-test.ts';
import { individualBands, individualRule, type IndividualCentre } from '../contrast/individual-bands.ts';
import type { BandResolver } from '../contrast/assemble.ts';
import { decideVerdict, describeTest, type DirectionWords, type FamilyStep, type PeriodicKind, type Verdict } from './rules.ts';
import { bandCheckFigure, type BandCheckFigure } from './figure.ts';
import { peakValues, type PeakCenterSummary } from './peak-center.ts';

export class BandCheckError extends Error {
  override name = 'BandCheckError';
}

export interface BandCheckOptions {
  /** aperiodic fit range of the stored fits, Hz: one range for every subject, read from the database */
  fitRangeHz: [number, number];
  /** level of every test and of the Bonferroni correction (default 0.05) */
  alpha?: number;
  /** width of each flank, Hz (default: the band's width) */
  flankWidthHz?: number;
  /** permutations per test (default: the contrast's) */
  permutations?: number;
  /** called after each test: step name, tests done, tests in all */
  onProgress?: (step: string, done: number, total: number) => void;
}

export interface BandCheckTests {
  /** raw band effect: log10 band power (the contrast's band method) */
  raw: ScalarTest;
  offset: ScalarTest;
  exponent: ScalarTest;
  /** periodic band effect: residual averaged over the band's bins */
  periodic: ScalarTest;
  /** highest fitted peak in the band, 0 where none, averaged over the channels */
  peakHeight: ScalarTest;
  /** centre (Hz) of the highest fitted peak in the band, mean over the channels with one; subjects without a peak left out (null: too few with one) */
  peakCenter: ScalarTest | null;
  /** full width at half maximum (Hz) of that peak, the same way (reported, does not decide) */
  peakWidth: ScalarTest | null;
  /** fitted aperiodic component averaged over the band's bins (helper of the rules) */
  aperiodicInBand: ScalarTest;
  lowerFlank: ScalarTest | null;
  upperFlank: ScalarTest | null;
  /** upper minus lower flank log power (helper of the rules) */
  tilt: ScalarTest | null;
  /** log10 relative band power (band integral / integral over the contrast's relativeRangeHz) */
  relative: ScalarTest;
}

export interface FrequencyWise {
  measure: string;
  freqsHz: number[];
  /** t and effect size per bin */
  stat: number[];
  effect: number[];
  effectKind: string;
  clusters: CompareCluster[];
  /** cluster-forming threshold and p-value rule of the test */
  threshold: { p: number; t: number; df: number };
  clusterMeasure: 'mass' | 'size' | 'none';
  pValueRule: string;
  /** clusters with p < α that overlap the band, and how far they reach */
  bandClusters: CompareCluster[];
  extent: string;
}

export interface BandCheckResult {
  kind: 'band-check';
  note: string;
  contrast: Contrast;
  band: Band;
  /** the channels averaged */
  channels: string[];
  fitRangeHz: [number, number];
  alpha: number;
  permutations: number;
  seed: number;
  flanks: { lower: Band | null; upper: Band | null; widthHz: number; note: string | null };
  tests: BandCheckTests;
  /** share of subjects per group (or condition) with a fitted peak in the band on at least one channel */
  peakPresence: Record<string, number>;
  /** the frequency test's subjects: with and without a peak per group, mean centre and width per group, and how missing peaks are treated */
  peakCenter: PeakCenterSummary;
  frequencyWise: FrequencyWise;
  normalisation: { denominatorHz: [number, number]; note: string | null };
  verdict: Verdict;
  /** band-specific and mixed verdicts: which periodic tests passed (power, frequency-shift, power-and-frequency-shift); else null */
  periodicKind: PeriodicKind | null;
  rule: string;
  sentence: string;
  family: FamilyStep[];
  /** smallest Bonferroni-adjusted p of the decision family (the ledger's p) */
  p: number;
  n: Record<string, number>;
  exclusions: Exclusion[];
  figure: BandCheckFigure;
  /** individual band: the rule and each subject's centre and edges (null for a fixed band) */
  individual: { searchHz: [number, number]; halfWidthHz: number; centres: IndividualCentre[]; note: string } | null;
}

function flankBand(name: string, lo: number, hi: number, axis: ContrastData['spectra']): Band | null {
  if (!(hi > lo)) return null;
  const bins = bandBins({ name, loHz: lo, hiHz: hi }, axis.freqStartHz, axis.freqStepHz, axis.nBins);
  if (!bins || bins.last - bins.first < 1) return null;
  // edges snapped to the bins the range holds, so the stated edges are the ones used
  const snap = (k: number) => Number((axis.freqStartHz + k * axis.freqStepHz).toFixed(6));
  return { name, loHz: snap(bins.first), hiHz: snap(bins.last) };
}

/** Flanks of equal width just below and above the band, inside the fit range, without the band's edge bins. */
export function bandFlanks(
  band: Band,
  widthHz: number,
  fitRangeHz: [number, number],
  axis: ContrastData['spectra'],
): { lower: Band | null; upper: Band | null; note: string | null } {
  const step = axis.freqStepHz;
  const lowest = Math.max(fitRangeHz[0], axis.freqStartHz > 0 ? axis.freqStartHz : step);
  const highest = Math.min(fitRangeHz[1], axis.freqStartHz + (axis.nBins - 1) * step);
  const lower = flankBand('lower flank', Math.max(band.loHz - widthHz, lowest), band.loHz - step, axis);
  const upper = flankBand('upper flank', band.hiHz + step, Math.min(band.hiHz + widthHz, highest), axis);
  const notes: string[] = [];
  const short = (f: Band | null, side: string) => {
    if (!f) notes.push(`no room for a ${side} flank inside the fit range ${fitRangeHz[0]}–${fitRangeHz[1]} Hz`);
    else if (f.hiHz - f.loHz < widthHz - 2 * step - 1e-9)
      notes.push(`the ${side} flank is cut to ${f.loHz}–${f.hiHz} Hz by the fit range ${fitRangeHz[0]}–${fitRangeHz[1]} Hz`);
  };
  short(lower, 'lower');
  short(upper, 'upper');
  return { lower, upper, note: notes.length ? notes.join('; ') : null };
}

export function directionWords(c: Contrast): DirectionWords {
  if (c.design === 'groups') return { up: `higher in ${c.groups![1]} than in ${c.groups![0]}`, down: `lower in ${c.groups![1]} than in ${c.groups![0]}` };
  if (c.design === 'paired') {
    const [a, b] = c.stages ?? c.sessions!.map((s) => `session ${s}`);
    return { up: `higher in ${b} than in ${a}`, down: `lower in ${b} than in ${a}` };
  }
  return { up: `higher with higher ${c.covariate}`, down: `lower with higher ${c.covariate}` };
}

function normalisationNote(raw: ScalarTest, rel: ScalarTest, range: [number, number], alpha: number): string | null {
  const a = raw.p < alpha;
  const r = rel.p < alpha;
  const both = `absolute ${describeTest(raw)}; relative ${describeTest(rel)}`;
  if (a && !r)
    return `Relative normalisation hides the effect seen in absolute band power (${both}): a change shared by the band and the ${range[0]}–${range[1]} Hz denominator cancels in the ratio.`;
  if (!a && r)
    return `Relative normalisation creates an effect absent from absolute band power (${both}): the ${range[0]}–${range[1]} Hz denominator differs, so the ratio changes though the band's own power does not.`;
  if (a && r && Math.sign(raw.effect) !== Math.sign(rel.effect))
    return `Relative normalisation reverses the sign of the effect (${both}): the ${range[0]}–${range[1]} Hz denominator changes more than the band.`;
  return null;
}

function describeExtent(band: Band, sig: CompareCluster[]): string {
  if (sig.length === 0) return `no significant cluster overlaps ${band.loHz}–${band.hiHz} Hz`;
  return sig
    .map((k) => {
      const beyond = k.fminHz < band.loHz || k.fmaxHz > band.hiHz;
      return `a ${k.sign > 0 ? 'positive' : 'negative'} cluster spans ${k.fminHz}–${k.fmaxHz} Hz (p = ${k.p.toPrecision(3)}), ${beyond ? 'reaching beyond the band' : 'inside the band'}`;
    })
    .join('; ');
}

export function bandCheck(contrastBase: Contrast, band: Band, data: ContrastData, options: BandCheckOptions): BandCheckResult {
  checkBand(band);
  const c = contrastBase;
  const alpha = options.alpha ?? 0.05;
  if (!(alpha > 0 && alpha < 1)) throw new BandCheckError(`alpha must lie in (0, 1), got ${alpha}`);
  const [fitLo, fitHi] = options.fitRangeHz;
  if (!(Number.isFinite(fitLo) && Number.isFinite(fitHi) && fitHi > fitLo && fitLo > 0))
    throw new BandCheckError(`fitRangeHz: invalid aperiodic fit range ${fitLo}–${fitHi} Hz`);
  if (band.loHz < fitLo || band.hiHz > fitHi)
    throw new BandCheckError(
      `band ${band.name} ${band.loHz}–${band.hiHz} Hz lies outside the aperiodic fit range ${fitLo}–${fitHi} Hz, so its residual is not defined`,
    );
  const axis = data.spectra;
  if (!bandBins(band, axis.freqStartHz, axis.freqStepHz, axis.nBins))
    throw new BandCheckError(`band ${band.name} ${band.loHz}–${band.hiHz} Hz holds no spectrum bin`);
  const widthHz = options.flankWidthHz ?? band.hiHz - band.loHz;
  if (!(widthHz > 0)) throw new BandCheckError(`flankWidthHz must be positive, got ${widthHz}`);
  const flanks = bandFlanks(band, widthHz, options.fitRangeHz, axis);
  const permutations = options.permutations ?? c.permutations;
  const so = { statistic: c.statistic, permutations, seed: c.seed };

  const individual = c.bandDefinition === 'individual' ? individualSetup(c, data, band, widthHz, options.fitRangeHz, flanks) : null;
  const bandsFor = individual?.resolve;
  const bandText = individual ? `${band.name} (individual: ${individual.words})` : `${band.name} ${band.loHz}–${band.hiHz} Hz`;
  // the peak tests look for the peak where the individual rule does: in the search range
  const peakBand = individual ? { name: band.name, loHz: individual.rule.searchHz[0], hiHz: individual.rule.searchHz[1] } : band;
  const peaks = peakValues({ ...c, bandDefinition: 'fixed' }, data, peakBand, c.channels === 'all' ? 'the channels' : c.channels.join(', '));
  const power = `log10 band power (${c.bandMethod === 'mean' ? 'mean density, µV²/Hz' : 'trapezoid integral, µV²'})`;
  const first = (r: Float64Array) => r[0];
  // spectral measures over the band: a fixed band's bins, or each subject's own band inside the span of all of them
  const span = individual?.span ?? band;
  const inBand = individual
    ? (r: Float64Array, freqs: readonly number[], subject: string, condition: 0 | 1) => {
        const b = individual.bandOf(subject, condition);
        return bandMean(r, freqs, b.loHz, b.hiHz);
      }
    : (r: Float64Array) => rowMean(r);
  const residual = () => assembleAveraged(c, data, { measure: 'residual', fminHz: span.loHz, fmaxHz: span.hiHz });
  const steps: { name: keyof BandCheckTests; values: () => ScalarValues | null }[] = [
    { name: 'raw', values: () => reduce(`${power} in ${bandText}`, assembleAveraged(c, data, { measure: 'band-power', bands: [band] }, bandsFor), first) },
    {
      name: 'offset',
      values: () => reduce(`aperiodic offset (log10 µV²/Hz), fit ${fitLo}–${fitHi} Hz`, assembleAveraged(c, data, { measure: 'offset' }), first),
    },
    { name: 'exponent', values: () => reduce(`aperiodic exponent, fit ${fitLo}–${fitHi} Hz`, assembleAveraged(c, data, { measure: 'exponent' }), first) },
    {
      name: 'periodic',
      values: () => {
        const a = residual();
        return reduce(`residual (log10 PSD minus the aperiodic fit) averaged over ${bandText}`, a, (r, subject, cond) =>
          inBand(r, a.input.freqsHz, subject, cond),
        );
      },
    },
    {
      name: 'peakHeight',
      values: () =>
        reduce(
          `height of the highest fitted peak in ${peakBand.name} ${peakBand.loHz}–${peakBand.hiHz} Hz (log10 above the aperiodic fit, 0 where none)`,
          assembleAveraged(c, data, { measure: 'peak-height', bands: [peakBand], bandDefinition: 'fixed' }),
          first,
        ),
    },
    { name: 'peakCenter', values: () => peaks.center },
    { name: 'peakWidth', values: () => peaks.width },
    {
      name: 'aperiodicInBand',
      values: () => {
        const parts = [assembleAveraged(c, data, { measure: 'log-psd', fminHz: span.loHz, fmaxHz: span.hiHz }), residual()];
        const freqs = parts[0].input.freqsHz;
        return combine(
          `fitted aperiodic component (log10 µV²/Hz) averaged over ${bandText}`,
          parts,
          // aperiodic = log10 PSD − residual, bin by bin, then the band mean
          ([logPsd, res], subject, cond) =>
            inBand(
              logPsd.map((v, i) => v - res[i]),
              freqs,
              subject,
              cond,
            ),
        );
      },
    },
    {
      name: 'lowerFlank',
      values: () =>
        flanks.lower
          ? reduce(
              `${power} in the lower flank ${individual ? "below each subject's band" : `${flanks.lower.loHz}–${flanks.lower.hiHz} Hz`}`,
              assembleAveraged(c, data, { measure: 'band-power', bands: [flanks.lower] }, bandsFor),
              first,
            )
          : null,
    },
    {
      name: 'upperFlank',
      values: () =>
        flanks.upper
          ? reduce(
              `${power} in the upper flank ${individual ? "above each subject's band" : `${flanks.upper.loHz}–${flanks.upper.hiHz} Hz`}`,
              assembleAveraged(c, data, { measure: 'band-power', bands: [flanks.upper] }, bandsFor),
              first,
            )
          : null,
    },
    {
      name: 'tilt',
      values: () =>
        flanks.lower && flanks.upper
          ? reduce(
              `upper minus lower flank ${power}`,
              assembleAveraged(c, data, { measure: 'band-power', bands: [flanks.lower, flanks.upper] }, bandsFor),
              (r) => r[1] - r[0],
            ) // bands are ordered by centre
          : null,
    },
    {
      name: 'relative',
      values: () =>
        reduce(
          `log10 relative band power in ${bandText}: band integral / integral over ${c.relativeRangeHz[0]}–${c.relativeRangeHz[1]} Hz`,
          assembleAveraged(c, data, { measure: 'relative-band-power', bands: [band] }, bandsFor),
          first,
        ),
    },
  ];
  const total = steps.length + 1;
  const tests = {} as Record<keyof BandCheckTests, ScalarTest | null>;
  const heightValues: { values?: ScalarValues } = {};
  steps.forEach((s, i) => {
    const v = s.values();
    if (s.name === 'peakHeight' && v) heightValues.values = v;
    tests[s.name] = v ? runScalarTest(v, so) : null;
    options.onProgress?.(s.name, i + 1, total);
  });
  const t = tests as unknown as BandCheckTests;

  // frequency-wise cluster test over the contrast's whole range (channel average, log10 PSD)
  const fw = compare({ ...c, measure: 'log-psd', channelAverage: true, permutations, bandDefinition: 'fixed' }, data);
  options.onProgress?.('frequency-wise', total, total);
  const sig = fw.clusters.filter((k) => k.p < alpha && k.fmaxHz >= band.loHz && k.fminHz <= band.hiHz);
  const frequencyWise: FrequencyWise = {
    measure: fw.measure,
    freqsHz: fw.statistics.freqsHz,
    stat: fw.statistics.stat,
    effect: fw.statistics.effect.value,
    effectKind: fw.statistics.effect.kind,
    clusters: fw.clusters,
    threshold: fw.statistics.threshold,
    clusterMeasure: fw.statistics.clusterMeasure,
    pValueRule: fw.statistics.pValueRule,
    bandClusters: sig,
    extent: describeExtent(band, sig),
  };

  const decision = decideVerdict(
    {
      periodic: t.periodic,
      peakCenter: { test: t.peakCenter, means: peaks.summary.means, withoutPeak: peaks.summary.withoutPeak, skipped: peaks.summary.skipped },
      offset: t.offset,
      exponent: t.exponent,
      aperiodicInBand: t.aperiodicInBand,
      lowerFlank: t.lowerFlank,
      upperFlank: t.upperFlank,
      tilt: t.tilt,
    },
    band.name,
    directionWords(c),
    alpha,
  );

  const exclusions = uniqueExclusions([...Object.values(tests).flatMap((x) => x?.excluded ?? []), ...fw.exclusions]);
  const figure = bandCheckFigure(c, data, band, flanks, options.fitRangeHz, fw.statistics as PermutationTestResult, peaks.summary.means);
  return {
    kind: 'band-check',
    note: RESEARCH_NOTE,
    contrast: c,
    band: { ...band },
    channels: channelsOf(fw.statistics.channels[0], c),
    fitRangeHz: [fitLo, fitHi],
    alpha,
    permutations: t.raw.permutations,
    seed: c.seed,
    flanks: { lower: flanks.lower, upper: flanks.upper, widthHz, note: flanks.note },
    tests: t,
    peakPresence: peakPresence(heightValues.values),
    peakCenter: peaks.summary,
    frequencyWise,
    normalisation: { denominatorHz: [...c.relativeRangeHz], note: normalisationNote(t.raw, t.relative, c.relativeRangeHz, alpha) },
    verdict: decision.verdict,
    periodicKind: decision.periodicKind,
    rule: decision.rule,
    sentence: decision.sentence,
    family: decision.family,
    p: Math.min(...decision.family.map((h) => h.adjustedP)),
    n: t.periodic.n,
    exclusions,
    figure,
    individual: individual
      ? { searchHz: individual.rule.searchHz, halfWidthHz: individual.rule.halfWidthHz, centres: individual.centres, note: individual.note }
      : null,
  };
}

/**
 * An individual band in the band check: each subject's band (individual-bands.ts, cut to the fit
 * range) per condition; the flanks follow it (same width, just outside it, inside the fit range;
 * the fixed flank where a subject's has no room); the span of every subject's band, over which
 * the spectral measures are read before each subject's own bins are averaged.
 */
function individualSetup(
  c: Contrast,
  data: ContrastData,
  band: Band,
  widthHz: number,
  fitRangeHz: [number, number],
  fixedFlanks: { lower: Band | null; upper: Band | null },
) {
  const rule = individualRule(c, band);
  const found = individualBands(c, data, band);
  const axis = data.spectra;
  const cut = (b: Band): Band => ({ name: b.name, loHz: Math.max(b.loHz, fitRangeHz[0]), hiHz: Math.min(b.hiHz, fitRangeHz[1]) });
  const bandOf = (subject: string, condition: number): Band => cut(found.bands.get(subject)?.[condition] ?? band);
  const flanksOf = new Map<string, ReturnType<typeof bandFlanks>>();
  const resolve: BandResolver = (subject, condition, b) => {
    if (b === band) return bandOf(subject, condition);
    if (b !== fixedFlanks.lower && b !== fixedFlanks.upper) return b;
    const key = `${subject}\u0000${condition}`;
    let f = flanksOf.get(key);
    if (!f) flanksOf.set(key, (f = bandFlanks(bandOf(subject, condition), widthHz, fitRangeHz, axis)));
    return (b === fixedFlanks.lower ? f.lower : f.upper) ?? b;
  };
  let lo = band.loHz;
  let hi = band.hiHz;
  for (const per of found.bands.values())
    for (const b of per) {
      lo = Math.min(lo, cut(b).loHz);
      hi = Math.max(hi, cut(b).hiHz);
    }
  const without = found.centres.filter((x) => x.centerHz === null).length;
  const words = `centred on each subject's fitted peak in ${rule.searchHz[0]}–${rule.searchHz[1]} Hz (median over the channels) ±${rule.halfWidthHz} Hz; the fixed ${band.loHz}–${band.hiHz} Hz where none`;
  const note = `${found.centres.length - without} of ${found.centres.length} subject-conditions have a fitted peak in ${rule.searchHz[0]}–${rule.searchHz[1]} Hz${without > 0 ? `; ${without} use the fixed band` : ''}. The peak tests look for the peak in the search range.`;
  return { rule, centres: found.centres, resolve, bandOf, span: { name: band.name, loHz: lo, hiHz: hi }, words, note };
}

/** The channel names behind the pseudo-channel "mean(C3,C4,…)". */
function channelsOf(pseudo: string, c: Contrast): string[] {
  const m = /^mean\((.*)\)$/.exec(pseudo);
  return m ? m[1].split(',') : c.channels === 'all' ? [pseudo] : [...c.channels];
}

function peakPresence(v: ScalarValues | undefined): Record<string, number> {
  if (!v) return {};
  const count = new Map<string, [number, number]>();
  v.subjects.forEach((s, i) => {
    const g = s.group ?? 'all';
    const [k, n] = count.get(g) ?? [0, 0];
    count.set(g, [k + (v.values[i] > 0 ? 1 : 0), n + 1]);
  });
  return Object.fromEntries([...count].map(([g, [k, n]]) => [g, k / n]));
}

/** One band check per channel set (each averaged), same band and options. */
export function bandCheckSets(
  contrastBase: Contrast,
  band: Band,
  data: ContrastData,
  sets: { name: string; channels: string[] }[],
  options: BandCheckOptions,
): { name: string; result: BandCheckResult }[] {
  return sets.map((s) => ({ name: s.name, result: bandCheck({ ...contrastBase, channels: s.channels }, band, data, options) }));
}
