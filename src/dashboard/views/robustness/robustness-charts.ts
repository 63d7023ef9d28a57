// Plot options of the specification curve (Simonsohn, Simmons & Nelson 2020): the paths' effect
// sizes sorted with their intervals on top, below a dot matrix of the choices each path used;
// both panels share the x axis (rank) and the left margin so the columns line up.
import * as Plot from '@observablehq/plot';
import type { SpecificationCurve } from '../../../core/verdict/index.ts';
import { matrixDots, type MatrixRow } from './robustness-data.ts';

const MARGIN_LEFT = 170;
const SIGNIFICANT = '#d55e00';
const NOT_SIGNIFICANT = '#8a8a8a';

const xScale = (n: number, label: string | null): Plot.ScaleOptions => ({ domain: [0.5, n + 0.5], label, ticks: Math.min(n, 12), tickFormat: 'd' });

export function curvePanel(curve: SpecificationCurve): Plot.PlotOptions {
  const kind = curve.paths[0]?.effectKind === 'hedges-g' ? "Hedges' g" : (curve.paths[0]?.effectKind ?? 'effect');
  const rows = curve.paths.map((p) => ({
    rank: p.rank,
    effect: p.effect,
    low: p.ciLow,
    high: p.ciHigh,
    status: p.significant ? `p < ${curve.alpha}` : `p ≥ ${curve.alpha}`,
    title: `${p.description}\n${kind} = ${p.effect.toFixed(2)} [${p.ciLow.toFixed(2)}, ${p.ciHigh.toFixed(2)}], p = ${p.p.toPrecision(3)}`,
  }));
  return {
    height: 260,
    marginLeft: MARGIN_LEFT,
    x: xScale(curve.nPaths, null),
    y: { label: `${kind} (95 % CI)`, grid: true },
    color: { domain: [`p < ${curve.alpha}`, `p ≥ ${curve.alpha}`], range: [SIGNIFICANT, NOT_SIGNIFICANT], legend: 'ramp', label: null },
    marks: [
      Plot.ruleY([0], { stroke: '#444' }),
      Plot.ruleY([curve.medianEffect], { stroke: '#444', strokeDasharray: '4,3' }),
      Plot.ruleX(rows, { x: 'rank', y1: 'low', y2: 'high', stroke: 'status', strokeOpacity: 0.7 }),
      Plot.dot(rows, { x: 'rank', y: 'effect', fill: 'status', r: 3.2, title: 'title' }),
    ],
  };
}

export function matrixPanel(curve: SpecificationCurve, rows: readonly MatrixRow[]): Plot.PlotOptions {
  const dots = matrixDots(curve, rows);
  return {
    height: 36 + 17 * rows.length,
    marginLeft: MARGIN_LEFT,
    x: xScale(curve.nPaths, 'path (sorted by effect size)'),
    y: { domain: rows.map((r) => r.label), label: null, tickSize: 0 },
    marks: [
      Plot.gridY(
        rows.map((r) => r.label),
        { stroke: '#ddd', strokeOpacity: 1 },
      ),
      Plot.dot(dots, { x: 'rank', y: 'label', fill: (d: (typeof dots)[number]) => (d.significant ? SIGNIFICANT : NOT_SIGNIFICANT), r: 2.6 }),
    ],
  };
}
