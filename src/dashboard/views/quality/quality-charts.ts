// Plot options for the quality screen's figures.
import * as Plot from '@observablehq/plot';
import { CELL_SCORE_MAX } from '../../../core/quality/cell-score.ts';
import { STAGE_COLORS } from '../cohort/cohort-charts.ts';
import type { CellDetail, GridCell } from './quality-data.ts';

type RenderFn = NonNullable<Plot.MarkOptions['render']>;

/** A render hook that makes each drawn cell clickable and names it (data-cell="subject|channel"). */
function clickableCells(cells: readonly GridCell[], onSelect: (c: GridCell) => void): RenderFn {
  return (index, scales, values, dimensions, context, next) => {
    const g = next!(index, scales, values, dimensions, context) as SVGGElement;
    const rects = g.querySelectorAll('rect');
    rects.forEach((rect, j) => {
      const c = cells[index[j]];
      rect.setAttribute('data-cell', `${c.subject}|${c.channel}`);
      rect.style.cursor = 'pointer';
      rect.addEventListener('click', () => onSelect(c));
    });
    return g;
  };
}

/** The subjects × channels grid; `mode` is 'score' or a metric id. */
export function qualityGridPlot(
  cells: readonly GridCell[],
  channels: readonly string[],
  subjects: readonly string[],
  mode: string,
  selected: { subject: string; channel: string } | null,
  onSelect: (c: GridCell) => void,
): Plot.PlotOptions {
  const byScore = mode === 'score';
  const shown = byScore ? [...cells] : cells.filter((c) => c.metrics[mode] !== undefined);
  const fill = byScore ? (c: GridCell) => c.score : (c: GridCell) => c.metrics[mode]?.value ?? Number.NaN;
  const flagged = byScore ? shown.filter((c) => c.nFlagged > 0) : shown.filter((c) => (c.metrics[mode]?.severity ?? 0) >= 1);
  const sel = selected ? shown.filter((c) => c.subject === selected.subject && c.channel === selected.channel) : [];
  return {
    height: 70 + 18 * subjects.length,
    marginLeft: 70,
    marginTop: 30,
    padding: 0.06,
    x: { domain: [...channels], label: null, axis: 'top', tickRotate: 0 },
    y: { domain: [...subjects], label: null },
    color: byScore
      ? { type: 'linear', domain: [0, CELL_SCORE_MAX], scheme: 'ylorrd', legend: 'ramp', label: 'quality score (0 clean, ≥ 1 flagged)' }
      : { type: 'linear', scheme: 'viridis', legend: 'ramp', label: `${mode} (worst stage)` },
    marks: [
      Plot.cell(shown, {
        x: 'channel',
        y: 'subject',
        fill,
        title: (c: GridCell) => `${c.subject} · ${c.channel}\nscore ${c.score.toFixed(2)}${c.reasons.length ? `\n${c.reasons.join('\n')}` : ''}`,
        render: clickableCells(shown, onSelect),
      }),
      Plot.cell(flagged, { x: 'channel', y: 'subject', fill: 'none', stroke: '#1d232b', strokeWidth: 1.2, inset: 1.5 }),
      Plot.cell(sel, { x: 'channel', y: 'subject', fill: 'none', stroke: '#2f6fae', strokeWidth: 3 }),
    ],
  };
}

/** The recording's spectrum against the cohort's median and inter-quartile band (log y). */
export function cellSpectrumPlot(d: CellDetail, maxHz: number): Plot.PlotOptions {
  const band: { f: number; q25: number; median: number; q75: number }[] = [];
  const own: { f: number; p: number }[] = [];
  if (d.cohort) {
    for (let b = 0; b < d.cohort.freqsHz.length; b++) {
      const f = d.cohort.freqsHz[b];
      if (f <= 0 || f > maxHz) continue;
      band.push({ f, q25: d.cohort.q25[b], median: d.cohort.median[b], q75: d.cohort.q75[b] });
      if (d.spectrum) own.push({ f, p: d.spectrum[b] });
    }
  }
  return {
    height: 300,
    x: { label: 'frequency (Hz)' },
    y: { type: 'log', label: 'PSD (µV²/Hz)', grid: true },
    color: { legend: 'ramp', domain: ['this recording', 'cohort median', 'cohort 25–75 %'], range: ['#c0392b', '#1d232b', '#9fb7cf'] },
    marks: [
      Plot.areaY(band, { x: 'f', y1: 'q25', y2: 'q75', fill: '#9fb7cf', fillOpacity: 0.6 }),
      Plot.line(band, { x: 'f', y: 'median', stroke: '#1d232b', strokeWidth: 1.3 }),
      Plot.line(own, { x: 'f', y: 'p', stroke: '#c0392b', strokeWidth: 1.8 }),
    ],
  };
}

/** Band power per epoch over the night (log y), rejected epochs marked. */
export function bandPowerNightPlot(d: Pick<CellDetail, 'epochs' | 'bandPower'>): Plot.PlotOptions {
  const onset = new Map(d.epochs.map((e) => [e.epoch, e.onsetS / 3600]));
  const rows = d.bandPower
    .filter((r) => r.band !== 'broadband' && typeof r.power === 'number' && r.power > 0)
    .map((r) => ({ band: String(r.band), h: onset.get(Number(r.epoch)) ?? Number(r.epoch) / 120, power: Number(r.power) }));
  const rejected = d.epochs.filter((e) => e.reasons !== '').map((e) => ({ h: e.onsetS / 3600, reasons: e.reasons }));
  return {
    height: 260,
    marginLeft: 70,
    x: { label: 'time from recording start (h)' },
    y: { type: 'log', label: 'band power (stored unit)', grid: true },
    color: { legend: 'ramp', scheme: 'tableau10' },
    marks: [
      Plot.tickX(rejected, { x: 'h', stroke: '#c0392b', strokeOpacity: 0.35, title: 'reasons' }),
      Plot.line(rows, { x: 'h', y: 'power', stroke: 'band', strokeWidth: 1.2 }),
    ],
  };
}

const HYPNOGRAM_ORDER = ['W', 'R', 'N1', 'N2', 'N3', 'unscored'];

/** The hypnogram (epochs.stage) on the same time axis. */
export function hypnogramPlot(epochs: CellDetail['epochs'], epochS: number): Plot.PlotOptions {
  const rows = epochs.map((e) => ({ x1: e.onsetS / 3600, x2: (e.onsetS + epochS) / 3600, stage: e.stage }));
  const stages = HYPNOGRAM_ORDER.filter((s) => rows.some((r) => r.stage === s));
  return {
    height: 40 + 22 * stages.length,
    marginLeft: 70,
    x: { label: 'time from recording start (h)' },
    y: { domain: stages, label: null },
    color: { domain: stages, range: stages.map((s) => STAGE_COLORS[s] ?? '#dddddd') },
    marks: [Plot.barX(rows, { x1: 'x1', x2: 'x2', y: 'stage', fill: 'stage', insetTop: 1, insetBottom: 1 })],
  };
}
