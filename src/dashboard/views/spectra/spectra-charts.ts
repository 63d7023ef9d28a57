// Plot options for the spectra view's figures.
import * as Plot from '@observablehq/plot';
import { MEASURE_LABELS, type GroupSpectra } from './spectra-data.ts';

/** Group colours (up to six groups), colour-blind safe (Okabe & Ito 2008). */
export const GROUP_COLORS = ['#0072b2', '#d55e00', '#009e73', '#cc79a7', '#e69f00', '#56b4e9'];

export interface SpectrumPlotOptions {
  /** x axis logarithmic (log-log for the absolute measure) or linear (semi-log) */
  logX: boolean;
  /** frequencies to mark (e.g. a contrast's significant bins), Hz */
  marked?: readonly { fminHz: number; fmaxHz: number; label: string }[];
  /** name each group's size in the legend (default true; not while the groups are blinded) */
  sizes?: boolean;
}

export function groupSpectraPlot(g: GroupSpectra, o: SpectrumPlotOptions): Plot.PlotOptions {
  const rows: { group: string; f: number; mean: number; low: number; high: number }[] = [];
  const fits: { group: string; f: number; fit: number }[] = [];
  const name = (c: GroupSpectra['groups'][number]) => (o.sizes === false ? c.group : `${c.group} (n = ${c.band.n})`);
  for (const c of g.groups) {
    for (let j = 0; j < g.freqsHz.length; j++) {
      const f = g.freqsHz[j];
      if (o.logX && f <= 0) continue;
      rows.push({ group: name(c), f, mean: c.band.mean[j], low: c.band.low[j], high: c.band.high[j] });
      if (c.fit) fits.push({ group: name(c), f, fit: c.fit[j] });
    }
  }
  const domain = g.groups.map(name);
  const marks: Plot.Markish[] = [];
  for (const m of o.marked ?? []) {
    marks.push(Plot.rectX([m], { x1: 'fminHz', x2: 'fmaxHz', fill: '#f2d27a', fillOpacity: 0.45 }));
    marks.push(Plot.text([m], { x: (d: typeof m) => (d.fminHz + d.fmaxHz) / 2, frameAnchor: 'top', text: 'label', dy: 6, fontSize: 10 }));
  }
  marks.push(
    Plot.areaY(rows, { x: 'f', y1: 'low', y2: 'high', fill: 'group', fillOpacity: 0.22, z: 'group' }),
    Plot.line(rows, { x: 'f', y: 'mean', stroke: 'group', strokeWidth: 1.8 }),
    Plot.line(fits, { x: 'f', y: 'fit', stroke: 'group', strokeWidth: 1.2, strokeDasharray: '5,3' }),
  );
  if (g.measure === 'residual') marks.push(Plot.ruleY([0], { stroke: '#888' }));
  return {
    height: 340,
    x: { type: o.logX ? 'log' : 'linear', label: 'frequency (Hz)', grid: true },
    y: { type: g.measure === 'absolute' ? 'log' : 'linear', label: MEASURE_LABELS[g.measure], grid: true },
    color: { domain, range: GROUP_COLORS.slice(0, domain.length), legend: 'ramp' },
    marks,
  };
}
