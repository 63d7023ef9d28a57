/**
 * The methods report of a compare or band-check result: plain scientific English with every
 * spectral and statistical parameter, the exclusions with reasons, the ledger counts, the
 * references of the methods used and the research-tool note; exported as Markdown and as a JSON
 * of parameters. Pure: the database facts come in as DatabaseFacts (facts.ts).
 */
import type { Contrast } from '../contrast/spec.ts';
import type { CompareResult } from '../contrast/run.ts';
import { RESEARCH_NOTE } from '../contrast/run.ts';
import { signText } from '../contrast/labels.ts';
import type { Exclusion } from '../contrast/data.ts';
import type { BandCheckResult } from '../verdict/band-check.ts';
import type { ScalarTest } from '../verdict/scalar-test.ts';
import { fmt } from '../verdict/rules.ts';
import { ingestParameterFacts, ReportInputError, type DatabaseFacts, type IngestParameterFacts } from './facts.ts';
import type { LedgerCounts } from './ledger.ts';
import { REFERENCE_LIST, type ReferenceKey } from './references.ts';
import { derivationText, warningText } from './data-text.ts';
import { outlierRate } from '../quality/outlier-limit.ts';
import { partParagraph } from '../confirmation/methods-text.ts';
import type { PartFields } from '../confirmation/stamp.ts';

export type ReportableResult = (CompareResult | BandCheckResult) & {
  database?: { file: string; runId: string; toolVersion: string; ingestParameters: unknown; runFinished?: boolean };
} & PartFields;

export interface MethodsParameters {
  kind: 'compare' | 'band-check';
  contrast: Contrast;
  band: BandCheckResult['band'] | null;
  database: { file: string; runId: string; toolVersion: string; runFinished: boolean } | null;
  ingest: IngestParameterFacts | null;
  frequencyResolutionHz: number | null;
  epochs: DatabaseFacts['epochs'] | null;
  fitRangesHz: [number, number][];
  n: Record<string, number>;
  exclusions: Exclusion[];
  statistics: Record<string, unknown>;
  ledger: LedgerCounts | null;
  /** the analysis' EEG channels as recorded (the reference each label names), when the facts hold them */
  recordedDerivations?: DatabaseFacts['recordedDerivations'];
  /** while a split exists: the part used, the split, the blinding and (a confirmation) the plan */
  split?: PartFields;
  references: string[];
  note: string;
}

export interface MethodsReport {
  markdown: string;
  parameters: MethodsParameters;
}

const g3 = (x: number) => Number(x.toPrecision(3)).toString().replace('-', '−');
const pct = (a: number, b: number) => (b > 0 ? `${((100 * a) / b).toFixed(1)} %` : 'n/a');
const hz = (r: readonly number[]) => `${r[0]}–${r[1]} Hz`;
const list = (xs: string[]) => (xs.length <= 1 ? xs.join('') : `${xs.slice(0, -1).join(', ')} and ${xs[xs.length - 1]}`);

const REFERENCE_WORDS: Record<string, string> = {
  recorded: 'as recorded',
  'linked-mastoids': 'linked mastoids (mean of M1 and M2)',
  'contralateral-mastoid': 'the contralateral mastoid',
  average: 'the common average',
  bipolar: 'bipolar pairs',
};

const STATISTIC_WORDS: Record<string, string> = {
  'welch-t': "Welch's t for unequal variances (Welch 1947)",
  'student-t': "Student's t with pooled variance",
  'paired-t': 'the paired t of the within-subject differences',
  'one-sample-t': 'the one-sample t against zero',
  pearson: 'the Pearson correlation, converted to t with n − 2 degrees of freedom',
  spearman: 'the Spearman rank correlation (Pearson correlation of ranks), converted to t with n − 2 degrees of freedom',
  'linear-model-t': 'the t of the effect of interest in a linear model with the nuisance covariates',
};

function designText(c: Contrast, n: Record<string, number>, refs: Set<ReferenceKey>): string {
  const sizes = Object.entries(n)
    .map(([k, v]) => `${k} n = ${v}`)
    .join(', ');
  let s: string;
  if (c.design === 'groups')
    s = `Two independent groups were compared, taken from the participants column "${c.groupColumn}": ${c.groups![0]} and ${c.groups![1]} (${sizes}); differences are ${c.groups![1]} minus ${c.groups![0]}.`;
  else if (c.design === 'paired' && c.stages)
    s = `Stages ${c.stages[0]} and ${c.stages[1]} were compared within subjects (${sizes}); differences are ${c.stages[1]} minus ${c.stages[0]}, permuted by sign flips of the differences.`;
  else if (c.design === 'paired')
    s = `Sessions ${c.sessions![0]} and ${c.sessions![1]} were compared within subjects (${sizes}); differences are session ${c.sessions![1]} minus session ${c.sessions![0]}, permuted by sign flips of the differences.`;
  else s = `The measure was correlated with the participants column "${c.covariate}" (${sizes}); the covariate was permuted across subjects.`;
  if (c.nuisance.length > 0) {
    refs.add('freedman1983');
    refs.add('winkler2014');
  }
  if (c.nuisance.length > 0)
    s += ` The analysis adjusted for ${list(c.nuisance.map((x) => `"${x}"`))} in a linear model, with permutation of the reduced model's residuals (Freedman & Lane 1983; Winkler et al. 2014).`;
  if (c.session !== undefined) s += ` Session ${c.session} was used.`;
  return s;
}

function channelText(c: Contrast, channels: string[]): string {
  const chosen = c.channels === 'all' ? channels : c.channels;
  if (chosen.length === 1) return `channel ${chosen[0]}`;
  const names = c.channels === 'all' ? `all stored channels (${channels.join(', ')})` : `channels ${c.channels.join(', ')}`;
  return c.channelAverage ? `the average over ${names}` : names;
}

function spectralSection(f: IngestParameterFacts, c: Contrast, facts: DatabaseFacts | null, refs: Set<ReferenceKey>): string {
  refs.add('welch1967');
  const res = 1 / f.segmentS;
  const recs = facts
    ? `${facts.recordings} recordings (sampling rates ${facts.samplingRatesHz.join(', ')} Hz; ${facts.channelsPerRecording.min === facts.channelsPerRecording.max ? facts.channelsPerRecording.min : `${facts.channelsPerRecording.min}–${facts.channelsPerRecording.max}`} channels each) were processed by bandwise ${facts.toolVersion} (ingest run ${facts.runId}, database ${facts.file}). `
    : '';
  // a channel sampled below 2·maxFreqHz is stored, banded and fitted up to its own Nyquist frequency
  const slow =
    facts && facts.samplingRatesHz.some((fs) => fs / 2 < f.maxFreqHz) ? ', each channel at most up to its own Nyquist frequency (half its sampling rate)' : '';
  const refsText = f.references.map((r) => REFERENCE_WORDS[r] ?? r).join('; ');
  const bipolar = f.bipolarPairs.length ? ` (bipolar pairs ${f.bipolarPairs.join(', ')})` : '';
  let avg: string;
  if (c.averaging === 'median') {
    refs.add('wilson1931');
    avg =
      'the median across clean epochs, divided by the median of χ²ν/ν (Wilson & Hilferty 1931 approximation, ν the equivalent degrees of freedom of one epoch) so that it estimates the same density as the mean';
  } else avg = 'the mean across clean epochs';
  return (
    `${recs}Sleep was scored in ${f.epochS}-s epochs with the AASM stages W, N1, N2, N3 and R. ` +
    `For every channel and epoch the power spectral density was estimated by Welch's method (Welch 1967): ${f.segmentS}-s Hann-windowed segments overlapping by ${g3(f.overlap * 100)} %, the mean of each segment removed, one-sided density scaling in µV²/Hz; ` +
    `the frequency resolution is ${g3(res)} Hz and spectra were stored from 0 to ${f.maxFreqHz} Hz${slow}. ` +
    `The epoch spectra of a stage were combined by ${avg}; a stage with fewer than ${f.minEpochs} clean epochs was flagged. ` +
    estimatorText(f, c, refs) +
    `Spectra were stored for these references: ${refsText}${bipolar}. This analysis used the reference ${REFERENCE_WORDS[c.reference] ?? c.reference} and the ${c.averaging} over epochs of stage ${stagesOf(c).join(' and ')}.` +
    (facts ? ` ${warningText(facts)}` : '')
  );
}

/** The multitaper estimate, when the analysis used it (Welch's method is stated above either way: epoch rejection and band powers rest on it). */
function estimatorText(f: IngestParameterFacts, c: Contrast, refs: Set<ReferenceKey>): string {
  if (c.estimator !== 'multitaper') return '';
  if (!f.multitaper) throw new ReportInputError('the result used multitaper spectra, but the ingest parameters hold no multitaper NW and K');
  refs.add('thomson1982');
  refs.add('percival1993');
  const { nw, k } = f.multitaper;
  return (
    `This analysis used the multitaper estimate stored beside Welch's (Thomson 1982): on the same segments and frequency grid, each segment's mean removed and its density the equally weighted mean of the eigenspectra of K = ${k} discrete prolate spheroidal (Slepian) tapers with time-half-bandwidth NW = ${g3(nw)} (computed as eigenvectors of the tridiagonal matrix of Percival & Walden 1993), ` +
    `a frequency resolution 2W = 2NW/T = ${g3((2 * nw) / f.segmentS)} Hz; segments and epochs were averaged as for Welch's estimate${c.averaging === 'median' ? ", the median corrected with the multitaper estimate's equivalent degrees of freedom (2K per segment, less for overlapping segments)" : ''}; epoch rejection used the Welch spectra. `
  );
}

// How the analysis' reference was obtained from channels recorded as derivations (planReferences, src/core/montage/reference.ts).
/** The channel names an analysis used: the contrast's list, or the result's (none for an average over all: every channel). */
function analysedChannels(c: Contrast, resultChannels: string[]): string[] {
  if (c.channels !== 'all') return c.channels;
  return c.channelAverage ? [] : resultChannels;
}

const stagesOf = (c: Contrast): string[] => (c.design === 'paired' && c.stages ? [...c.stages] : [c.stage]);

function rejectionSection(f: IngestParameterFacts, c: Contrast, facts: DatabaseFacts | null, refs: Set<ReferenceKey>): string {
  refs.add('iglewicz1993');
  refs.add('welch1967');
  const r = f.rejection;
  const rate = outlierRate(r.outlierZ);
  let s =
    `An epoch was rejected for a channel when its peak-to-peak amplitude exceeded ${r.maxPeakToPeakUv} µV; when its standard deviation was below ${r.flatSdUv} µV or one value repeated for at least ${r.flatRunS} s (flat); ` +
    `or when its log10 power over ${hz(r.broadbandHz)} (broadband) or over ${hz(r.muscleHz)} (muscle range) was an outlier among the n epochs of the same stage and channel: |x − median| above both c_n·1.4826·MAD (modified z-score, Iglewicz & Hoaglin 1993; c_n chosen by simulation so that n Gaussian values lose the share 2Φ(−${r.outlierZ}) = ${(100 * rate).toFixed(3)} % at every n, where a fixed cut at ${r.outlierZ} loses far more when n is small) ` +
    `and ${r.outlierZ} sampling SDs of the log10 band power implied by the Welch estimate (equivalent degrees of freedom of the band, Welch 1967). ` +
    `Under Gaussian scatter each outlier rule is expected to remove ${(100 * rate).toFixed(3)} % of clean channel-epochs, the two together at most ${(200 * rate).toFixed(3)} %.`;
  if (facts && facts.epochs.length > 0) {
    const used = facts.epochs.filter((e) => stagesOf(c).includes(e.stage));
    const all = facts.epochs.reduce((a, e) => ({ n: a.n + e.channelEpochs, k: a.k + e.rejected }), { n: 0, k: 0 });
    const reasons = (e: { byReason: Record<string, number> }) =>
      Object.entries(e.byReason)
        .sort()
        .map(([k, v]) => `${k} ${v}`)
        .join(', ') || 'none';
    for (const e of used)
      s += ` In ${e.stage}, ${e.rejected} of ${e.channelEpochs} channel-epochs (${pct(e.rejected, e.channelEpochs)}) were rejected (${reasons(e)}; chance under Gaussian scatter: at most ${g3(rate * e.channelEpochs)} per outlier rule).`;
    s += ` Over all stages, ${all.k} of ${all.n} channel-epochs (${pct(all.k, all.n)}) were rejected.`;
  }
  return s;
}

function aperiodicSection(f: IngestParameterFacts, facts: DatabaseFacts | null, c: Contrast, usesFit: boolean, refs: Set<ReferenceKey>): string | null {
  if (!f.fit) return usesFit ? 'No aperiodic fit was stored by the ingest run.' : null;
  refs.add('donoghue2020');
  const ranges = facts?.fitRangesHz ?? [];
  const stated =
    ranges.length === 1
      ? `${hz(ranges[0])} for every subject (as stored)`
      : ranges.length > 1
        ? `ranges ${ranges.map(hz).join(', ')} (several stored)`
        : hz(f.fit.fitRangeHz);
  let s =
    `Each stored stage spectrum was decomposed into an aperiodic component and Gaussian peaks (Donoghue et al. 2020): log10 P(f) = b − log10(k + f^χ) + Σ h·exp(−(f − c)²/(2w²)), with offset b, exponent χ and knee k ` +
    `(${f.fit.aperiodicForm === 'knee' ? 'knee fitted' : 'k = 0, a plain power law'}), fitted over ${stated}` +
    (f.fit.maxPeaks !== undefined ? ` with at most ${f.fit.maxPeaks} peaks` : '') +
    '. The residual spectrum is log10 power minus the fitted aperiodic component.';
  if (c.aperiodicMethod === 'irasa') {
    refs.add('wen2016');
    s += ' The aperiodic estimate used here is IRASA (Wen & Liu 2016).';
  }
  return s;
}

function exclusionSection(ex: Exclusion[], n: Record<string, number>): string {
  const sizes = Object.entries(n)
    .map(([k, v]) => `${k} ${v}`)
    .join(', ');
  const line = (e: Exclusion) => `- ${e.subject}${e.channel ? ` (${e.channel}${e.stage ? `, ${e.stage}` : ''})` : e.stage ? ` (${e.stage})` : ''}: ${e.reason}`;
  const out = ex.filter((e) => !e.subjectStays);
  const stays = ex.filter((e) => e.subjectStays);
  const parts = [
    out.length === 0
      ? `No subject was left out (analysed: ${sizes}).`
      : `${out.length} subject${out.length === 1 ? ' was' : 's were'} left out (analysed: ${sizes}):\n\n${out.map(line).join('\n')}`,
  ];
  if (stays.length > 0)
    parts.push(
      `Excluded channels were treated as missing data, the subject kept for its other channels (each point's statistic uses the subjects with a value there):\n\n${stays.map(line).join('\n')}`,
    );
  return parts.join('\n\n');
}

function permutationText(p: { permutations: number; exact: boolean; seed: number }, what: string): string {
  return p.exact ? `all ${p.permutations} ${what} were enumerated (exact test)` : `${p.permutations} random ${what} were drawn from seed ${p.seed}`;
}

/** The permutation p of a cluster or TFCE score, in words. */
function pRule(p: { permutations: number; exact: boolean }): string {
  return p.exact
    ? `p = (number of relabellings, the observed one included, whose largest statistic reaches the observed one)/${p.permutations}`
    : `p = (1 + number of permutations whose largest statistic reaches the observed one)/(1 + ${p.permutations}) (Phipson & Smyth 2010)`;
}

function relabellingWord(c: Contrast): string {
  return c.design === 'groups' ? 'relabellings of the groups (sizes kept)' : c.design === 'paired' ? 'sign flips' : 'permutations of the covariate';
}

function compareStatistics(r: CompareResult, refs: Set<ReferenceKey>): { text: string; json: Record<string, unknown> } {
  const s = r.statistics;
  const c = r.contrast;
  refs.add('phipson2010');
  if (s.effect.kind === 'hedges-g') refs.add('hedges1985');
  else refs.add('fisher1921');
  if (s.statistic === 'welch-t') refs.add('welch1947');
  let corr: string;
  const perm = permutationText(s, relabellingWord(c));
  if (c.correction === 'tfce' && s.tfce) {
    refs.add('smith2009');
    corr = `Multiple comparisons over points were corrected by threshold-free cluster enhancement (Smith & Nichols 2009) with E = ${s.tfce.E}, H = ${s.tfce.H} and step ${s.tfce.dh}, the corrected p of a point from the largest |TFCE| score of each permutation; ${perm}.`;
  } else if (c.correction === 'none') {
    corr = 'No correction for multiple comparisons was applied; p-values are uncorrected, from the t distribution.';
  } else {
    refs.add('maris2007');
    // results written before the layout was recorded (no channelLayout) keep their wording
    const how =
      r.channelLayout?.neighbours === 'table'
        ? 'the neighbour table given with the contrast'
        : r.channelLayout?.neighbours === 'positions'
          ? "Delaunay triangulation of the channels' electrode positions (from the recordings' positions files, else the idealised 10-10 positions of their names) projected onto a disk, edges longer than twice the median edge dropped"
          : 'Delaunay triangulation of the 10-10 electrode positions, or the neighbour table given';
    const space = s.channelNeighbours ? ` and neighbouring channels (${how})` : '';
    corr =
      `Multiple comparisons were corrected by cluster-based permutation (Maris & Oostenveld 2007): points with |t| above ${g3(s.threshold.t)} (two-tailed p = ${c.clusterP} with ${s.threshold.df} degrees of freedom) formed clusters of one sign along neighbouring frequencies${s.frequencyAdjacency ? '' : ' (none: band points are not neighbours)'}${space}; ` +
      `the cluster statistic was the ${c.correction === 'cluster-size' ? 'number of points' : 'sum of t (mass)'}, compared with the largest |cluster statistic| of each permutation (both signs); ${perm}; ${pRule(s)}.`;
  }
  const text =
    `The measure was ${r.measure}, over ${c.fminHz}–${c.fmaxHz} Hz in ${channelText(c, s.channels.length === 1 && c.channelAverage ? [s.channels[0]] : s.channels)}. ` +
    `The point statistic was ${STATISTIC_WORDS[s.statistic] ?? s.statistic} at every ${s.channels.length > 1 ? 'channel × frequency point' : 'frequency point'}. ${corr} ` +
    `Effect sizes are ${s.effect.kind === 'hedges-g' ? "Hedges' g with a large-sample interval (Hedges & Olkin 1985)" : 'correlations with a Fisher z interval (Fisher 1921)'} at the ${g3(s.effect.level * 100)} % level.`;
  const json = {
    statistic: s.statistic,
    correction: c.correction,
    clusterP: c.clusterP,
    threshold: s.threshold,
    clusterMeasure: s.clusterMeasure,
    tfce: s.tfce ? { E: s.tfce.E, H: s.tfce.H, dh: s.tfce.dh } : null,
    permutations: s.permutations,
    exact: s.exact,
    seed: s.seed,
    pValueRule: s.pValueRule,
    effectSize: s.effect.kind,
    confidenceLevel: s.effect.level,
    channels: s.channels,
    frequencyAdjacency: s.frequencyAdjacency,
    spatialNeighbours: s.channelNeighbours !== null,
  };
  return { text, json };
}

function compareResults(r: CompareResult): string {
  const sig = r.clusters.filter((k) => k.p < 0.05);
  if (r.clusters.length === 0) return 'No cluster formed.';
  const lines = r.clusters
    .slice(0, 10)
    .map(
      (k) =>
        `- ${k.sign > 0 ? 'positive' : 'negative'} cluster (${signText(r.contrast, k.sign)}), ${k.fminHz}–${k.fmaxHz} Hz, channels ${k.channels.join(', ')}: ${r.contrast.correction === 'cluster-size' ? 'size' : 'mass'} ${g3(r.contrast.correction === 'cluster-size' ? k.size : k.mass)}, p = ${g3(k.p)}`,
    );
  return `${r.clusters.length} cluster${r.clusters.length === 1 ? '' : 's'} formed, ${sig.length} with p < 0.05${r.clusters.length > 10 ? ' (the 10 smallest p shown)' : ''}:\n\n${lines.join('\n')}`;
}

function testLine(name: string, t: ScalarTest | null | undefined, missing = 'no room inside the fit range'): string {
  if (!t) return `- ${name}: not computed (${missing})`;
  const e = t.effectKind === 'hedges-g' ? 'g' : t.effectKind;
  const d = t.difference !== null ? `, difference ${g3(t.difference)}` : '';
  return `- ${name} — ${t.measure}: ${e} = ${fmt(t.effect)} [${fmt(t.ciLow)}, ${fmt(t.ciHigh)}]${d}, t = ${fmt(t.t)}, p = ${g3(t.p)} (${Object.entries(t.n)
    .map(([k, v]) => `${k} ${v}`)
    .join(', ')})`;
}

function bandStatistics(r: BandCheckResult, refs: Set<ReferenceKey>): { text: string; json: Record<string, unknown> } {
  const c = r.contrast;
  const t = r.tests;
  refs.add('phipson2010');
  refs.add('maris2007');
  refs.add(t.raw.effectKind === 'hedges-g' ? 'hedges1985' : 'fisher1921');
  if (t.raw.statistic === 'welch-t') refs.add('welch1947');
  const L = r.flanks.lower;
  const U = r.flanks.upper;
  const fw = r.frequencyWise;
  const text =
    `The band check asked whether an effect in ${r.band.name} (${r.band.loHz}–${r.band.hiHz} Hz), in the average over ${r.channels.length === 1 ? 'channel' : 'channels'} ${r.channels.join(', ')}, is band-specific or a broadband aperiodic change. ` +
    (r.individual
      ? `The band was individual: centred on each subject's own fitted peak in ${hz(r.individual.searchHz)} (the median over the channels of each channel's highest fitted peak there) with a half-width of ${g3(r.individual.halfWidthHz)} Hz, the flanks following it; a subject without a fitted peak there kept the fixed band. ${r.individual.note} `
      : '') +
    `Each of the following was computed per subject and tested on its own with ${STATISTIC_WORDS[t.raw.statistic] ?? t.raw.statistic} and a two-tailed permutation test of |t| (${permutationText(t.raw, relabellingWord(c))}; p = (1 + number of permutations with |t*| ≥ |t|)/(1 + permutations), Phipson & Smyth 2010): ` +
    `log10 band power (${c.bandMethod === 'mean' ? 'mean density' : 'trapezoid integral'}); the aperiodic offset and exponent; the residual averaged over the band's bins (periodic power); the height of the highest fitted peak in the band (0 where none); the centre frequency and the full width at half maximum of that peak (Hz; mean over the channels with a peak in the band; subjects without one on any channel left out of these two tests only${
      r.peakCenter
        ? `: ${Object.entries(r.peakCenter.withoutPeak)
            .map(([k, v]) => `${k} ${v}`)
            .join(', ')}`
        : ''
    }); the aperiodic component averaged over the band; ` +
    `log10 power in flanks of ${r.flanks.widthHz} Hz just below (${L ? `${L.loHz}–${L.hiHz} Hz` : 'none'}) and above (${U ? `${U.loHz}–${U.hiHz} Hz` : 'none'}) the band${r.flanks.note ? ` (${r.flanks.note})` : ''} and their difference (upper minus lower); and log10 relative band power (band integral over the integral across ${hz(r.normalisation.denominatorHz)}). ` +
    `The verdict rests on ${r.family.length === 4 ? 'four tests — the periodic power, the peak centre (a shift of the peak is a band-specific change), the offset and the exponent —' : 'the periodic, offset and exponent tests,'} Bonferroni-corrected at α = ${r.alpha} (each passes at p ≤ ${g3(r.alpha / r.family.length)}); the aperiodic level in the band, the flanks and their difference tell the kinds of a passing aperiodic effect apart (rules in the bandwise README). ` +
    `To show how far the effect extends, log10 PSD over ${c.fminHz}–${c.fmaxHz} Hz was tested at every frequency with cluster-based permutation (Maris & Oostenveld 2007; |t| above ${g3(fw.threshold.t)}, two-tailed p = ${c.clusterP} with ${fw.threshold.df} degrees of freedom; ${pRule(t.raw)}). ` +
    `Effect sizes are ${t.raw.effectKind === 'hedges-g' ? "Hedges' g with a large-sample interval (Hedges & Olkin 1985)" : 'correlations with a Fisher z interval (Fisher 1921)'} at the ${g3(t.raw.level * 100)} % level.`;
  const json = {
    statistic: t.raw.statistic,
    permutations: t.raw.permutations,
    exact: t.raw.exact,
    seed: r.seed,
    alpha: r.alpha,
    decisionCorrection: 'bonferroni',
    family: r.family,
    flanks: r.flanks,
    relativeDenominatorHz: r.normalisation.denominatorHz,
    frequencyWise: {
      correction: c.correction,
      clusterP: c.clusterP,
      threshold: fw.threshold,
      clusterMeasure: fw.clusterMeasure,
      pValueRule: fw.pValueRule,
      fminHz: c.fminHz,
      fmaxHz: c.fmaxHz,
    },
    effectSize: t.raw.effectKind,
    confidenceLevel: t.raw.level,
    channels: r.channels,
  };
  return { text, json };
}

function bandResults(r: BandCheckResult): string {
  const t = r.tests;
  const lines = [
    testLine('raw band effect', t.raw),
    testLine('aperiodic offset', t.offset),
    testLine('aperiodic exponent', t.exponent),
    testLine('periodic band effect', t.periodic),
    testLine('peak height', t.peakHeight),
    testLine('peak centre', t.peakCenter, r.peakCenter?.skipped ?? 'not part of this result'),
    testLine('peak width', t.peakWidth, r.peakCenter?.skipped ?? 'not part of this result'),
    testLine('aperiodic level in the band', t.aperiodicInBand),
    testLine('lower flank', t.lowerFlank),
    testLine('upper flank', t.upperFlank),
    testLine('flank difference', t.tilt),
    testLine('relative band power', t.relative),
  ];
  const presence = Object.entries(r.peakPresence)
    .map(([k, v]) => `${k} ${(100 * v).toFixed(0)} %`)
    .join(', ');
  const centres = r.peakCenter?.means
    .map((m) => `${m.name} ${m.centerHz.toFixed(2)} Hz (width ${m.widthHz.toFixed(2)} Hz${m.n === null ? '' : `, n = ${m.n}`})`)
    .join(', ');
  const kind = r.periodicKind ? ` Periodic change: ${r.periodicKind}.` : '';
  return (
    `Verdict: **${r.verdict}** (rule ${r.rule}).${kind} ${r.sentence}\n\n${lines.join('\n')}\n\n` +
    (presence ? `Subjects with a fitted peak in the band on at least one channel: ${presence}.\n\n` : '') +
    (centres ? `Mean centre of the highest fitted peak in the band: ${centres}. ${r.peakCenter!.note}\n\n` : '') +
    `Frequency-wise: ${r.frequencyWise.extent}.` +
    (r.normalisation.note ? `\n\n${r.normalisation.note}` : '')
  );
}

function ledgerSection(l: LedgerCounts | null): string {
  if (!l) return 'No ledger was given, so the number of analyses run on this database is not known.';
  const kinds = Object.entries(l.byKind)
    .map(([k, v]) => `${v} ${k === 'robustness' ? `robustness path${v === 1 ? '' : 's'}` : k}`)
    .join(', ');
  const repeats =
    l.repeats > 0
      ? ` ${l.repeats} further run${l.repeats === 1 ? '' : 's'} repeated an analysis already counted (same contrast, exclusions and data) and ${l.repeats === 1 ? 'is' : 'are'} not counted again.`
      : '';
  return (
    `${l.browserOnly ? "This browser's own ledger of this database (the ledger beside the database could not be reached, so analyses run elsewhere are not in it)" : 'The ledger of this database'} records ${l.analyses} distinct analys${l.analyses === 1 ? 'is' : 'es'} (${kinds || 'none'}; each path of a robustness run counts as one), ` +
    `of which ${l.significant} had p < 0.05.${repeats} A result chosen from many analyses overstates the evidence; weigh this one against that count.`
  );
}

/** The contrast's keys and values, one per line, as set for this analysis. */
function contrastList(c: Contrast): string {
  return Object.entries(c)
    .map(([k, v]) => `- ${k}: ${typeof v === 'object' ? JSON.stringify(v) : String(v)}`)
    .join('\n');
}

export function methodsReport(result: ReportableResult, facts: DatabaseFacts | null, ledger: LedgerCounts | null): MethodsReport {
  const c = result.contrast;
  const refs = new Set<ReferenceKey>();
  const ingestRaw = facts?.ingestParameters ?? result.database?.ingestParameters;
  const f = ingestRaw === undefined ? null : ingestParameterFacts(ingestRaw);
  const isBand = result.kind === 'band-check';
  const usesFit = isBand || ['residual', 'offset', 'exponent', 'knee', 'peak-height', 'peak-center', 'peak-width'].includes(c.measure);
  const n = isBand ? (result as BandCheckResult).n : (result as CompareResult).n;
  const stats = isBand ? bandStatistics(result as BandCheckResult, refs) : compareStatistics(result as CompareResult, refs);
  const channels = analysedChannels(c, isBand ? (result as BandCheckResult).channels : (result as CompareResult).statistics.channels);
  const derivations = derivationText(facts, c, channels);
  const parts: string[] = [`# Methods${isBand ? `: band check of ${(result as BandCheckResult).band.name}` : ''}`, `*${RESEARCH_NOTE}*`];
  // the result's own word counts: it says what the analysis read, whatever the run became later
  const runFinished = result.database?.runFinished ?? facts?.runFinished ?? true;
  const runId = result.database?.runId ?? facts?.runId ?? null;
  if (!runFinished) {
    parts.push(
      `**Unfinished ingest run.** The ingest run ${runId} had not finished when this analysis read it (it was interrupted or still being written), ` +
        'so the analysis used the recordings stored by then, which may not be the whole cohort.',
    );
  }
  if (f) {
    parts.push('## Recordings and spectra', spectralSection(f, c, facts, refs));
    if (derivations) parts.push(derivations);
    parts.push('## Epoch rejection', rejectionSection(f, c, facts, refs));
    const ap = aperiodicSection(f, facts, c, usesFit, refs);
    if (ap) parts.push('## Aperiodic model', ap);
  } else parts.push('## Recordings and spectra', 'The ingest parameters of the database were not available, so the spectral parameters cannot be stated.');
  parts.push('## Subjects and exclusions', exclusionSection(result.exclusions, n));
  parts.push('## Design and statistics', designText(c, n, refs), stats.text);
  parts.push('## Result', isBand ? bandResults(result as BandCheckResult) : compareResults(result as CompareResult));
  const split = partParagraph(result);
  if (split) parts.push('## Exploration and confirmation', split);
  parts.push('## Analyses run', ledgerSection(ledger));
  parts.push('## Contrast settings', contrastList(c));
  const keys = [...refs].sort((a, b) => REFERENCE_LIST[a].localeCompare(REFERENCE_LIST[b]));
  parts.push('## References', keys.map((k) => `- ${REFERENCE_LIST[k]}`).join('\n'));
  const db = facts ?? result.database ?? null;
  const parameters: MethodsParameters = {
    kind: result.kind,
    contrast: c,
    band: isBand ? (result as BandCheckResult).band : null,
    database: db ? { file: db.file, runId: db.runId, toolVersion: db.toolVersion, runFinished } : null,
    ingest: f,
    frequencyResolutionHz: f ? 1 / f.segmentS : null,
    epochs: facts?.epochs ?? null,
    fitRangesHz: facts?.fitRangesHz ?? (isBand ? [(result as BandCheckResult).fitRangeHz] : []),
    n,
    exclusions: result.exclusions,
    statistics: stats.json,
    ledger,
    ...(facts?.recordedDerivations
      ? { recordedDerivations: facts.recordedDerivations.filter((d) => channels.length === 0 || channels.includes(d.channel)) }
      : {}),
    ...(result.part ? { split: { part: result.part, split: result.split, blinded: result.blinded, plan: result.plan } } : {}),
    references: keys.map((k) => REFERENCE_LIST[k]),
    note: RESEARCH_NOTE,
  };
  return { markdown: parts.join('\n\n') + '\n', parameters };
}
