/**
 * The short methods paragraph of a compare or band-check result, to paste into a paper: data,
 * spectra and statistics in about 200–300 words with every parameter, and one results sentence
 * that names the significant findings only (the full text, methods.ts, lists every cluster and
 * test). Pure: the database facts come in as DatabaseFacts (facts.ts).
 */
import type { CompareResult } from '../contrast/run.ts';
import { designTitle, signText, statisticLabel } from '../contrast/labels.ts';
import type { BandCheckResult } from '../verdict/band-check.ts';
import { ingestParameterFacts, type DatabaseFacts } from './facts.ts';
import type { LedgerCounts } from './ledger.ts';
import type { ReportableResult } from './methods.ts';

/** Findings at or below this p enter the results sentence (the family's Bonferroni threshold for a band check). */
export const SHORT_ALPHA = 0.05;

const g3 = (x: number) => Number(x.toPrecision(3)).toString().replace('-', '−');
const sizes = (n: Record<string, number>) =>
  Object.entries(n)
    .map(([k, v]) => `${k} n = ${v}`)
    .join(', ');

const CORRECTION_WORDS: Record<string, string> = {
  'cluster-mass': 'cluster-based permutation with the cluster mass (sum of t)',
  'cluster-size': 'cluster-based permutation with the cluster size',
  tfce: 'threshold-free cluster enhancement',
  none: 'no correction for multiple comparisons',
};

function dataSentence(r: ReportableResult, facts: DatabaseFacts | null): string {
  const file = facts?.file ?? r.database?.file ?? 'an unnamed database';
  const version = facts?.toolVersion ?? r.database?.toolVersion;
  const run = facts?.runId ?? r.database?.runId;
  const n = r.kind === 'band-check' ? (r as BandCheckResult).n : (r as CompareResult).n;
  const recs = facts ? `${facts.recordings} recordings` : 'The recordings';
  const left = r.exclusions.filter((e) => !e.subjectStays);
  const out = left.length;
  const chans = r.exclusions.filter((e) => e.subjectStays).length;
  const reasons = new Map<string, number>();
  for (const e of left) reasons.set(e.reason, (reasons.get(e.reason) ?? 0) + 1);
  const why = [...reasons].map(([k, v]) => `${k} ${v}`).join(', ');
  return (
    `${recs} stored in the database ${file}${version ? ` (bandwise ${version}` : ''}${version && run ? `, ingest run ${run})` : version ? ')' : ''} were analysed (${sizes(n)}); ` +
    `${out === 0 ? 'no subject was excluded' : `${out} subject${out === 1 ? ' was' : 's were'} excluded (${why})`}${chans > 0 ? ` and ${chans} channel${chans === 1 ? '' : 's'} treated as missing` : ''}.`
  );
}

const FIT_MEASURES = ['residual', 'offset', 'exponent', 'knee', 'peak-height', 'peak-center', 'peak-width'];

function spectraSentence(r: ReportableResult, facts: DatabaseFacts | null): string {
  const c = r.contrast;
  const raw = facts?.ingestParameters ?? r.database?.ingestParameters;
  const stages = c.design === 'paired' && c.stages ? c.stages.join(' and ') : c.stage;
  if (raw === undefined || raw === null)
    return `Spectra of stage ${stages} (reference ${c.reference}, ${c.averaging} over epochs) were used; the ingest parameters were not available.`;
  const f = ingestParameterFacts(raw);
  const rej = f.rejection;
  const est =
    c.estimator === 'multitaper' && f.multitaper
      ? `by the multitaper method (Thomson 1982; NW = ${g3(f.multitaper.nw)}, K = ${f.multitaper.k}) on ${f.segmentS}-s segments overlapping by ${g3(f.overlap * 100)} %`
      : `by Welch's method (Welch 1967; ${f.segmentS}-s Hann windows, ${g3(f.overlap * 100)} % overlap)`;
  const used = facts?.epochs.filter((e) => (c.design === 'paired' && c.stages ? c.stages.includes(e.stage as never) : e.stage === c.stage)) ?? [];
  const share = used.length
    ? ` (${used.map((e) => `${g3((100 * e.rejected) / Math.max(1, e.channelEpochs))} % of ${e.stage} channel-epochs`).join(', ')})`
    : '';
  return (
    `Sleep was scored in ${f.epochS}-s epochs (AASM stages). Power spectral density was estimated per channel and epoch ${est}, ` +
    `frequency resolution ${g3(1 / f.segmentS)} Hz, and averaged (${c.averaging}) over the clean epochs of stage ${stages}, reference ${c.reference}. ` +
    `Epochs were rejected${share} for peak-to-peak amplitude above ${rej.maxPeakToPeakUv} µV, flat signal (SD below ${rej.flatSdUv} µV), or outlying broadband (${rej.broadbandHz.join('–')} Hz) ` +
    `or muscle-range (${rej.muscleHz.join('–')} Hz) power (modified z-score above ${rej.outlierZ}).` +
    (f.fit && (r.kind === 'band-check' || FIT_MEASURES.includes(c.measure))
      ? ` Aperiodic (1/f) components were fitted over ${f.fit.fitRangeHz.join('–')} Hz (Donoghue et al. 2020).`
      : '')
  );
}

function compareStatistics(r: CompareResult): string {
  const c = r.contrast;
  const s = r.statistics;
  const chans = s.channels.length === 1 ? `channel ${s.channels[0]}` : `${s.channels.length} channels (${s.channels.join(', ')})`;
  const perm = s.exact ? `all ${s.permutations} relabellings (exact)` : `${s.permutations} permutations (seed ${s.seed})`;
  const corr =
    c.correction === 'tfce' && s.tfce
      ? `threshold-free cluster enhancement (Smith & Nichols 2009; E = ${s.tfce.E}, H = ${s.tfce.H}) over ${perm}`
      : c.correction === 'none'
        ? 'no correction for multiple comparisons'
        : `${CORRECTION_WORDS[c.correction]} (Maris & Oostenveld 2007), cluster-forming threshold |t| > ${g3(s.threshold.t)} (two-tailed p = ${c.clusterP}, df = ${g3(s.threshold.df)}), over ${perm}`;
  // a two-condition design: the title states the direction once, the label's first part names the statistic ("Welch t" of "Welch t, patient − control")
  const tested =
    c.design === 'covariate'
      ? `was tested at every point for a ${statisticLabel(c, s.statistic)} (stage ${c.stage})`
      : `was compared (${designTitle(c)}) with the ${statisticLabel(c, s.statistic).split(', ')[0]} at every point`;
  return (
    `The measure ${r.measure} over ${c.fminHz}–${c.fmaxHz} Hz in ${chans} ${tested}, ` +
    `corrected by ${corr}; effect sizes are ${s.effect.kind === 'hedges-g' ? "Hedges' g" : 'correlations'} with ${g3(s.effect.level * 100)} % intervals.`
  );
}

function compareResultSentence(r: CompareResult): string {
  const sig = r.clusters.filter((k) => k.p < SHORT_ALPHA);
  if (sig.length === 0) return `No cluster reached p < ${SHORT_ALPHA}.`;
  const stat = r.contrast.correction === 'cluster-size' ? 'size' : 'mass';
  const one = (k: CompareResult['clusters'][number]) =>
    `${signText(r.contrast, k.sign)} at ${k.fminHz}–${k.fmaxHz} Hz over ${k.channels.join(', ')} (${r.contrast.correction === 'tfce' ? '' : `${stat} ${g3(stat === 'size' ? k.size : k.mass)}, `}p = ${g3(k.p)})`;
  return `${sig.length} cluster${sig.length === 1 ? '' : 's'} reached p < ${SHORT_ALPHA}: ${sig.map(one).join('; ')}.`;
}

function bandStatistics(r: BandCheckResult): string {
  const t = r.tests.raw;
  return (
    `The band check of ${r.band.name} (${r.band.loHz}–${r.band.hiHz} Hz; ${designTitle(r.contrast)}; mean over ${r.channels.join(', ')}) tested per subject the periodic band power (residual above the aperiodic fit), ` +
    `the aperiodic offset and exponent${r.family.length === 4 ? ' and the peak centre frequency' : ''} with ${statisticLabel(r.contrast, t.statistic)} and ${t.exact ? `all ${t.permutations} relabellings` : `${t.permutations} permutations (seed ${r.seed})`}, ` +
    `Bonferroni-corrected at α = ${r.alpha} (each test at p ≤ ${g3(r.alpha / r.family.length)}); log10 PSD over ${r.contrast.fminHz}–${r.contrast.fmaxHz} Hz was tested frequency-wise by cluster-based permutation (Maris & Oostenveld 2007; cluster-forming p = ${r.contrast.clusterP}).`
  );
}

function bandResultSentence(r: BandCheckResult): string {
  const passed = r.family.filter((h) => h.passed);
  const tests = passed.map((h) => `${h.test} (p = ${g3(h.p)})`);
  return `Verdict: ${r.verdict}. ${passed.length === 0 ? 'No test of the decision family passed.' : `Passed: ${tests.join(', ')}.`}`;
}

/** The short methods paragraph (plain text, one paragraph) and its results sentence after it. */
export function shortMethods(r: ReportableResult, facts: DatabaseFacts | null, ledger: LedgerCounts | null): string {
  const isBand = r.kind === 'band-check';
  const stats = isBand ? bandStatistics(r as BandCheckResult) : compareStatistics(r as CompareResult);
  const result = isBand ? bandResultSentence(r as BandCheckResult) : compareResultSentence(r as CompareResult);
  const count = ledger
    ? ` It was one of ${ledger.analyses} distinct analyses recorded for this database (${ledger.significant} with p < 0.05)${ledger.browserOnly ? ', as counted by one browser' : ''}.`
    : '';
  return `${dataSentence(r, facts)} ${spectraSentence(r, facts)} ${stats}${count} bandwise is a research tool, not a diagnostic device.\n\n${result}\n`;
}

/** Words in a text (runs of non-space characters), as word counters count them. */
export function wordCount(text: string): number {
  return text.split(/\s+/).filter(Boolean).length;
}
