/**
 * The title and caption of a contrast figure: what is shown and every parameter a reader needs
 * (measure, stage, design and its direction, reference, averaging, frequency range, correction,
 * threshold, permutations and seed, n per group), in one wording for the dashboard and the
 * command line.
 */
import type { CompareResult } from '../contrast/run.ts';
import { designTitle, statisticLabel } from '../contrast/labels.ts';
import type { FigureKind } from './options.ts';

/** Clusters outlined or ringed as significant: permutation p below this. */
export const FIGURE_ALPHA = 0.05;

const g3 = (x: number) => Number(x.toPrecision(3)).toString();

/** "Welch t, patient − control" as the colour bar states it; a scalp map's is the mean over its band. */
export function colourBarLabel(r: CompareResult, kind: FigureKind, bandHz: [number, number]): string {
  const label = statisticLabel(r.contrast, r.statistics.statistic);
  return kind === 'scalp-map' ? `mean ${label}, ${bandHz[0]}–${bandHz[1]} Hz` : label;
}

export function figureTitle(r: CompareResult, kind: FigureKind, bandHz: [number, number]): string {
  const what = kind === 'scalp-map' ? `${r.measure}, ${bandHz[0]}–${bandHz[1]} Hz` : `${r.measure} over channels and frequencies`;
  return `${what}: ${designTitle(r.contrast)}`;
}

function correctionText(r: CompareResult): string {
  const c = r.contrast;
  const s = r.statistics;
  const perm = s.exact ? `all ${s.permutations} relabellings (exact)` : `${s.permutations} permutations (seed ${s.seed})`;
  if (c.correction === 'none') return 'No correction for multiple comparisons (uncorrected p from the t distribution).';
  if (c.correction === 'tfce' && s.tfce) return `Correction: threshold-free cluster enhancement (Smith & Nichols 2009; E ${s.tfce.E}, H ${s.tfce.H}), ${perm}.`;
  const stat = c.correction === 'cluster-size' ? 'size' : 'mass';
  return (
    `Correction: cluster ${stat} (Maris & Oostenveld 2007), cluster-forming threshold |t| > ${g3(s.threshold.t)} ` +
    `(two-tailed p ${c.clusterP}, df ${g3(s.threshold.df)}), ${perm}.`
  );
}

/** The caption: what is drawn, the data, the statistics and the sizes. */
export function figureCaption(r: CompareResult, kind: FigureKind, bandHz: [number, number]): string {
  const c = r.contrast;
  const label = statisticLabel(c, r.statistics.statistic);
  const sig = r.clusters.filter((k) => k.p < FIGURE_ALPHA).length;
  const shown =
    kind === 'scalp-map'
      ? `Mean ${label} per electrode over ${bandHz[0]}–${bandHz[1]} Hz, interpolated between electrodes (inverse-distance weighting); ringed: channels of clusters with p < ${FIGURE_ALPHA} overlapping the band.`
      : `Statistic: ${label}, per channel and frequency; outlined: clusters with p < ${FIGURE_ALPHA} (${sig} of ${r.clusters.length}).`;
  const stages = c.design === 'paired' && c.stages ? c.stages.join(' and ') : c.stage;
  const data =
    `Measure ${r.measure}, stage ${stages}, reference ${c.reference}, ${c.averaging} over epochs, spectra by ${c.estimator === 'multitaper' ? 'the multitaper method' : "Welch's method"}, ${c.fminHz}–${c.fmaxHz} Hz` +
    (c.channelAverage ? ', averaged over channels.' : '.');
  const n = `n: ${Object.entries(r.n)
    .map(([g, v]) => `${g} ${v}`)
    .join(', ')}${r.exclusions.length > 0 ? ` (${r.exclusions.length} exclusion${r.exclusions.length === 1 ? '' : 's'} applied)` : ''}.`;
  return `${shown} ${data} ${correctionText(r)} ${n}`;
}
