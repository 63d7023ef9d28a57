// Plot options of the band check figure: each group's (or condition's) mean log10 spectrum with
// its mean aperiodic fit, the mean residual spectra, and the frequency-wise effect size with its
// clusters; the band and its flanks shaded in every panel, and each group's mean centre of the
// band's highest fitted peak as a dotted vertical line in its colour on the spectra and residual
// panels (data: src/core/verdict bandCheckFigure).
import * as Plot from '@observablehq/plot';
import type { BandCheckFigure } from '../../../core/verdict/index.ts';
import type { Band } from '../../../core/spectrum/bands.ts';
import { GROUP_COLORS } from '../spectra/spectra-charts.ts';

const MARGIN_LEFT = 60;
const BAND_FILL = '#f2d27a';
const FLANK_FILL = '#c9d3df';

interface Shade {
  x1: number;
  x2: number;
  label: string;
  fill: string;
}

function shades(fig: BandCheckFigure): Shade[] {
  const out: Shade[] = [{ x1: fig.band.loHz, x2: fig.band.hiHz, label: fig.band.name, fill: BAND_FILL }];
  const flank = (b: Band | null, label: string) => b && out.push({ x1: b.loHz, x2: b.hiHz, label, fill: FLANK_FILL });
  flank(fig.lowerFlank, 'lower flank');
  flank(fig.upperFlank, 'upper flank');
  return out;
}

function shadeMarks(fig: BandCheckFigure, labels: boolean): Plot.Markish[] {
  const s = shades(fig);
  const marks: Plot.Markish[] = [Plot.rectX(s, { x1: 'x1', x2: 'x2', fill: (d: Shade) => d.fill, fillOpacity: 0.5 })];
  if (labels) marks.push(Plot.text(s, { x: (d: Shade) => (d.x1 + d.x2) / 2, text: 'label', frameAnchor: 'top', dy: 4, fontSize: 10 }));
  return marks;
}

const seriesLabel = (s: BandCheckFigure['series'][number]) => (s.n === null ? s.name : `${s.name} (n = ${s.n})`);

interface CentreMark {
  series: string;
  centerHz: number;
  text: string;
}

/** Each series' mean peak centre in its colour (results saved before the frequency test have none). */
function centreMarks(fig: BandCheckFigure, labels: boolean): Plot.Markish[] {
  const rows: CentreMark[] = [];
  for (const m of fig.peakCenters ?? []) {
    const s = fig.series.find((x) => x.name === m.name);
    if (s) rows.push({ series: seriesLabel(s), centerHz: m.centerHz, text: `${m.centerHz.toFixed(2)} Hz` });
  }
  const marks: Plot.Markish[] = [Plot.ruleX(rows, { x: 'centerHz', stroke: 'series', strokeWidth: 1.4, strokeDasharray: '2,3' })];
  if (labels)
    marks.push(Plot.text(rows, { x: 'centerHz', text: 'text', fill: 'series', frameAnchor: 'bottom', dy: -4, rotate: -90, textAnchor: 'start', fontSize: 10 }));
  return marks;
}

function colour(fig: BandCheckFigure): Plot.ScaleOptions {
  const domain = fig.series.map(seriesLabel);
  return { domain, range: GROUP_COLORS.slice(0, domain.length), legend: 'ramp', label: null };
}

const x = (fig: BandCheckFigure, label: string | null): Plot.ScaleOptions => ({
  domain: [fig.freqsHz[0], fig.freqsHz[fig.freqsHz.length - 1]],
  label,
  grid: true,
});

/** Mean log10 spectra (solid) with their mean aperiodic fits (dashed). */
export function spectraPanel(fig: BandCheckFigure): Plot.PlotOptions {
  const rows = fig.series.flatMap((s) => fig.freqsHz.map((f, j) => ({ series: seriesLabel(s), f, psd: s.log10Psd[j], fit: s.aperiodicLog10[j] })));
  return {
    height: 300,
    marginLeft: MARGIN_LEFT,
    x: x(fig, null),
    y: { label: 'mean log10 PSD (µV²/Hz)', grid: true },
    color: colour(fig),
    marks: [
      ...shadeMarks(fig, true),
      Plot.line(rows, { x: 'f', y: 'psd', stroke: 'series', strokeWidth: 1.8 }),
      Plot.line(rows, { x: 'f', y: 'fit', stroke: 'series', strokeWidth: 1.2, strokeDasharray: '5,3' }),
      ...centreMarks(fig, true),
    ],
  };
}

/** Mean residual spectra (log10 power minus the aperiodic fit). */
export function residualPanel(fig: BandCheckFigure): Plot.PlotOptions {
  const rows = fig.series.flatMap((s) => fig.freqsHz.map((f, j) => ({ series: seriesLabel(s), f, residual: s.residual[j] })));
  return {
    height: 200,
    marginLeft: MARGIN_LEFT,
    x: x(fig, null),
    y: { label: 'mean residual (log10)', grid: true },
    color: { ...colour(fig), legend: false },
    marks: [
      ...shadeMarks(fig, false),
      Plot.ruleY([0], { stroke: '#888' }),
      Plot.line(rows, { x: 'f', y: 'residual', stroke: 'series', strokeWidth: 1.8 }),
      ...centreMarks(fig, false),
    ],
  };
}

/** Frequency-wise effect size with its interval; significant clusters (p < alpha) shaded red. */
export function effectPanel(fig: BandCheckFigure, alpha: number): Plot.PlotOptions {
  const e = fig.effect;
  const rows = e.freqsHz.map((f, j) => ({ f, value: e.value[j], low: e.ciLow[j], high: e.ciHigh[j] }));
  const sig = fig.clusters.filter((k) => k.p < alpha);
  const kind = e.kind === 'hedges-g' ? "Hedges' g" : e.kind;
  return {
    height: 200,
    marginLeft: MARGIN_LEFT,
    x: x(fig, 'frequency (Hz)'),
    y: { label: `${kind} of log10 PSD`, grid: true },
    marks: [
      ...shadeMarks(fig, false),
      Plot.ruleY([0], { stroke: '#888' }),
      Plot.areaY(rows, { x: 'f', y1: 'low', y2: 'high', fill: '#555', fillOpacity: 0.18 }),
      Plot.line(rows, { x: 'f', y: 'value', stroke: '#222', strokeWidth: 1.6 }),
      Plot.rectX(sig, { x1: 'fminHz', x2: 'fmaxHz', fill: '#c0392b', fillOpacity: 0.12 }),
      Plot.text(sig, {
        x: (k: (typeof sig)[number]) => (k.fminHz + k.fmaxHz) / 2,
        text: (k: (typeof sig)[number]) => `cluster p = ${k.p.toFixed(3)}`,
        frameAnchor: 'bottom',
        dy: -4,
        fontSize: 10,
        fill: '#a93226',
      }),
    ],
  };
}
