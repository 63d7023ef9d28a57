// Plot options of the deviation view: one subject's z over channels × frequencies, its measure
// against the reference band on one channel, and every subject's share of deviant points by group.
import * as Plot from '@observablehq/plot';
import type { DeviationResult, ReferenceBand } from '../../../core/planning/index.ts';

/** z beyond this is drawn in the extreme colour. */
const Z_LIMIT = 4;

export function zMapPlot(r: DeviationResult, subjectIndex: number): Plot.PlotOptions {
  const s = r.subjects[subjectIndex];
  const F = r.freqsHz.length;
  const half = F > 1 ? (r.freqsHz[1] - r.freqsHz[0]) / 2 : 0.5;
  const cells = r.channels.flatMap((channel, c) => r.freqsHz.map((f, i) => ({ x1: f - half, x2: f + half, y1: c, y2: c + 1, z: s.z[c][i], channel, f })));
  return {
    height: 60 + 22 * r.channels.length,
    marginLeft: 60,
    x: { label: F > 1 ? 'frequency (Hz)' : null, ticks: F > 1 ? undefined : [] },
    y: { label: null, domain: [r.channels.length, 0], ticks: r.channels.map((_, i) => i + 0.5), tickFormat: (v: number) => r.channels[Math.floor(v)] ?? '' },
    color: {
      type: 'linear',
      scheme: 'rdbu',
      reverse: true,
      domain: [-Z_LIMIT, Z_LIMIT],
      clamp: true,
      legend: 'ramp',
      label: `z of ${s.subject} against ${r.reference.group}`,
    },
    marks: [
      Plot.rect(cells, {
        x1: 'x1',
        x2: 'x2',
        y1: 'y1',
        y2: 'y2',
        fill: (d: (typeof cells)[number]) => d.z ?? NaN,
        title: (d: (typeof cells)[number]) => `${d.channel} ${d.f} Hz: z = ${d.z === null ? '–' : d.z.toFixed(2)}`,
      }),
      Plot.rect(
        cells.filter((d) => d.z !== null && Math.abs(d.z) > 2),
        { x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', stroke: '#111', strokeWidth: 0.6 },
      ),
    ],
  };
}

export function bandPlot(r: DeviationResult, band: ReferenceBand, channelIndex: number, subject: string): Plot.PlotOptions {
  const F = r.freqsHz.length;
  const rows = r.freqsHz.map((f, i) => {
    const q = channelIndex * F + i;
    return { f, low: band.low[q], median: band.median[q], high: band.high[q], value: band.values[q] };
  });
  return {
    height: 300,
    x: { label: 'frequency (Hz)', grid: true },
    y: { label: r.measure, grid: true },
    color: { domain: [subject, `${r.reference.group} median`], range: ['#d55e00', '#0072b2'], legend: 'ramp' },
    marks: [
      Plot.areaY(rows, { x: 'f', y1: 'low', y2: 'high', fill: '#0072b2', fillOpacity: 0.18 }),
      Plot.line(rows, { x: 'f', y: 'median', stroke: '#0072b2', strokeWidth: 1.5 }),
      F > 1 ? Plot.line(rows, { x: 'f', y: 'value', stroke: '#d55e00', strokeWidth: 1.8 }) : Plot.dot(rows, { x: 'f', y: 'value', fill: '#d55e00', r: 4 }),
    ],
  };
}

export function sharesPlot(r: DeviationResult, subject: string | null): Plot.PlotOptions {
  const rows = r.subjects.map((s) => ({ subject: s.subject, group: s.group ?? '(no group)', share: s.share, chosen: s.subject === subject }));
  return {
    height: 80 + 30 * r.groups.length,
    marginLeft: 90,
    x: { label: 'share of points with |z| > 2', grid: true, domain: [0, Math.max(0.2, ...rows.map((d) => d.share))] },
    y: { label: null },
    marks: [
      Plot.ruleX([r.expectedShare], { stroke: '#888', strokeDasharray: '4,3' }),
      Plot.dot(rows, {
        x: 'share',
        y: 'group',
        fill: (d: (typeof rows)[number]) => (d.chosen ? '#d55e00' : '#0072b2'),
        r: (d: (typeof rows)[number]) => (d.chosen ? 6 : 3.5),
        fillOpacity: 0.75,
        title: (d: (typeof rows)[number]) => `${d.subject}: ${(100 * d.share).toFixed(1)} %`,
      }),
    ],
  };
}
