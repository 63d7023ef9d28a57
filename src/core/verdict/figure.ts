/**
 * Figure data of a band check, for the dashboard to draw (no drawing here): each group's (or
 * condition's) mean log10 spectrum with its mean aperiodic fit, the mean residual spectrum, the
 * band and its flanks, the mean centre of the band's highest fitted peak per group (or
 * condition), and the frequency-wise effect sizes with the clusters.
 * Means are over subjects of the channel-averaged values, in log10 units.
 */
import type { Contrast } from '../contrast/spec.ts';
import type { ContrastData } from '../contrast/data.ts';
import type { Band } from '../spectrum/bands.ts';
import type { PermutationTestResult } from '../stats/index.ts';
import { assembleAveraged } from './scalar-test.ts';
import type { PeakGroupMean } from './peak-center.ts';

export interface FigureSeries {
  /** group name, condition name, or "all subjects" */
  name: string;
  /** subjects in the series; null in a blinded exploration (group sizes pooled, src/core/confirmation/blind-results.ts) */
  n: number | null;
  /** mean log10 PSD (µV²/Hz) per frequency */
  log10Psd: number[];
  /** mean fitted aperiodic component, log10 µV²/Hz */
  aperiodicLog10: number[];
  /** mean residual (log10 PSD minus the aperiodic fit) */
  residual: number[];
}

export interface BandCheckFigure {
  freqsHz: number[];
  series: FigureSeries[];
  band: Band;
  lowerFlank: Band | null;
  upperFlank: Band | null;
  fitRangeHz: [number, number];
  /** mean centre and width (Hz) of the highest fitted peak in the band per series (names as in `series`), over the subjects with a peak */
  peakCenters: PeakGroupMean[];
  /** frequency-wise effect per bin of the cluster test (its own frequencies) */
  effect: { freqsHz: number[]; kind: string; value: number[]; ciLow: number[]; ciHigh: number[] };
  clusters: { sign: 1 | -1; p: number; fminHz: number; fmaxHz: number }[];
}

export function bandCheckFigure(
  c: Contrast,
  data: ContrastData,
  band: Band,
  flanks: { lower: Band | null; upper: Band | null },
  fitRangeHz: [number, number],
  fw: PermutationTestResult,
  peakCenters: PeakGroupMean[],
): BandCheckFigure {
  const axis = data.spectra;
  const fminHz = Math.max(c.fminHz, axis.freqStartHz > 0 ? axis.freqStartHz : axis.freqStepHz);
  const logPsd = assembleAveraged(c, data, { measure: 'log-psd', fminHz, fmaxHz: c.fmaxHz });
  const residual = assembleAveraged(c, data, { measure: 'residual', fminHz, fmaxHz: c.fmaxHz });
  const F = residual.input.freqsHz.length;
  const rowOf = new Map(logPsd.subjects.map((s, i) => [s.subject, i]));
  const conditions: { name: string; which: 'data' | 'second' }[] = [];
  const design = residual.input.design;
  if (design.kind === 'paired') {
    const [a, b] = design.conditionNames ?? ['first', 'second'];
    conditions.push({ name: a, which: 'data' }, { name: b, which: 'second' });
  } else conditions.push({ name: '', which: 'data' });
  const groupOf = (i: number) => (design.kind === 'groups' ? (residual.subjects[i].group ?? 'all subjects') : 'all subjects');
  const names = design.kind === 'groups' ? (design.groupNames ?? []) : ['all subjects'];
  const series: FigureSeries[] = [];
  for (const cond of conditions) {
    for (const g of names) {
      const sums = { log: new Float64Array(F), ap: new Float64Array(F), res: new Float64Array(F) };
      let n = 0;
      residual.subjects.forEach((s, i) => {
        const j = rowOf.get(s.subject);
        if (j === undefined || groupOf(i) !== g) return;
        const R = cond.which === 'data' ? residual.input.data : (residual.input.design as { second: Float64Array }).second;
        const L = cond.which === 'data' ? logPsd.input.data : (logPsd.input.design as { second: Float64Array }).second;
        for (let f = 0; f < F; f++) {
          const l = L[j * F + f];
          const r = R[i * F + f];
          sums.log[f] += l;
          sums.res[f] += r;
          sums.ap[f] += l - r; // aperiodic fit = log10 PSD − residual
        }
        n++;
      });
      const mean = (a: Float64Array) => Array.from(a, (v) => (n > 0 ? v / n : NaN));
      series.push({ name: [g, cond.name].filter(Boolean).join(', '), n, log10Psd: mean(sums.log), aperiodicLog10: mean(sums.ap), residual: mean(sums.res) });
    }
  }
  return {
    freqsHz: [...residual.input.freqsHz],
    series,
    band: { ...band },
    lowerFlank: flanks.lower,
    upperFlank: flanks.upper,
    fitRangeHz: [...fitRangeHz],
    // a paired design's series are "all subjects, <condition>"; the peak means are per condition
    peakCenters: peakCenters.map((m) => ({ ...m, name: design.kind === 'paired' ? `all subjects, ${m.name}` : m.name })),
    effect: { freqsHz: fw.freqsHz, kind: fw.effect.kind, value: fw.effect.value, ciLow: fw.effect.ciLow, ciHigh: fw.effect.ciHigh },
    clusters: fw.clusters.map((k) => ({ sign: k.sign, p: k.p, fminHz: k.fminHz, fmaxHz: k.fmaxHz })),
  };
}
