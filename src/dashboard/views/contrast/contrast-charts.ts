// Plot options for the contrast view's figures.
import * as Plot from '@observablehq/plot';
import type { CompareResult } from '../../../core/contrast/run.ts';
import type { ClusterResult } from '../../../core/stats/index.ts';
import { designTitle, statisticLabel } from '../../../core/contrast/labels.ts';

/** Clusters drawn as significant: permutation p below this. */
export const ALPHA = 0.05;

interface Segment {
  x1: number;
  x2: number;
  y1: number;
  y2: number;
  cluster: string;
}

/** Edges of the cells of a cluster that border a cell outside it (channel rows as drawn, bins along x). */
function clusterOutline(k: ClusterResult, nFreqs: number, freqs: readonly number[], halfStep: number, label: string): Segment[] {
  const inside = new Set(k.points);
  const segs: Segment[] = [];
  for (const p of k.points) {
    const ch = Math.floor(p / nFreqs);
    const f = p % nFreqs;
    const x1 = freqs[f] - halfStep;
    const x2 = freqs[f] + halfStep;
    if (f === 0 || !inside.has(p - 1)) segs.push({ x1, x2: x1, y1: ch, y2: ch + 1, cluster: label });
    if (f === nFreqs - 1 || !inside.has(p + 1)) segs.push({ x1: x2, x2, y1: ch, y2: ch + 1, cluster: label });
    if (!inside.has(p - nFreqs)) segs.push({ x1, x2, y1: ch, y2: ch, cluster: label });
    if (!inside.has(p + nFreqs)) segs.push({ x1, x2, y1: ch + 1, y2: ch + 1, cluster: label });
  }
  return segs;
}

/** The statistic map's title: the data, the design and its direction. */
export function statisticMapTitle(r: CompareResult): string {
  return `Statistic over channels and frequencies: ${designTitle(r.contrast)}`;
}

/** The statistic over channels × frequencies, significant clusters outlined. */
export function statisticMapPlot(r: CompareResult): Plot.PlotOptions {
  const s = r.statistics;
  const F = s.freqsHz.length;
  const step = F > 1 ? s.freqsHz[1] - s.freqsHz[0] : 1;
  const half = step / 2;
  const cells = s.stat.map((t, p) => {
    const ch = Math.floor(p / F);
    const f = s.freqsHz[p % F];
    return { x1: f - half, x2: f + half, y1: ch, y2: ch + 1, t, channel: s.channels[ch], f };
  });
  const m = Math.max(1, ...s.stat.map(Math.abs));
  const outlines = s.clusters
    .map((k, i) => ({ k, i }))
    .filter(({ k }) => k.p < ALPHA)
    .flatMap(({ k, i }) => clusterOutline(k, F, s.freqsHz, half, `cluster ${i + 1}`));
  return {
    height: 60 + 22 * s.channels.length,
    marginLeft: 60,
    x: { label: 'frequency (Hz)' },
    y: {
      label: null,
      domain: [s.channels.length, 0],
      ticks: s.channels.map((_, i) => i + 0.5),
      tickFormat: (v: number) => s.channels[Math.floor(v)] ?? '',
    },
    color: { type: 'linear', scheme: 'rdbu', reverse: true, domain: [-m, m], legend: 'ramp', label: statisticLabel(r.contrast, s.statistic) },
    marks: [
      Plot.rect(cells, {
        x1: 'x1',
        x2: 'x2',
        y1: 'y1',
        y2: 'y2',
        fill: 't',
        title: (d: (typeof cells)[number]) => `${d.channel} ${d.f} Hz: t = ${d.t.toFixed(2)}`,
      }),
      Plot.link(outlines, { x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', stroke: '#111', strokeWidth: 2 }),
    ],
  };
}
