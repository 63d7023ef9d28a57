// Plot options of the power view: the power curve with its Clopper–Pearson intervals.
import * as Plot from '@observablehq/plot';
import type { PowerResult } from '../../../core/planning/index.ts';

export function powerCurvePlot(r: PowerResult): Plot.PlotOptions {
  const rows = r.curve.map((p) => ({
    ...p,
    title: `n = ${p.nPerGroup} per group: power ${p.power.toFixed(3)} [${p.ciLow.toFixed(3)}, ${p.ciHigh.toFixed(3)}], ${p.found} of ${p.simulations} simulations`,
  }));
  return {
    height: 300,
    x: { label: 'subjects per group', grid: true, inset: 24, ticks: rows.map((p) => p.nPerGroup), tickFormat: 'd' },
    y: { label: 'power', domain: [0, 1], grid: true },
    marks: [
      Plot.ruleY([r.alpha], { stroke: '#888', strokeDasharray: '4,3' }),
      Plot.ruleY([0.8], { stroke: '#bbb' }),
      Plot.ruleX(rows, { x: 'nPerGroup', y1: 'ciLow', y2: 'ciHigh', stroke: '#0072b2', strokeWidth: 2 }),
      Plot.line(rows, { x: 'nPerGroup', y: 'power', stroke: '#0072b2' }),
      Plot.dot(rows, { x: 'nPerGroup', y: 'power', fill: '#0072b2', r: 4, title: 'title' }),
    ],
  };
}
