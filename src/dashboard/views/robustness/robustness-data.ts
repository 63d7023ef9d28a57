// The specification curve's rows: which choices each path used (the dot matrix under the curve),
// the table of paths (with the peak-centre test of a path decided on power and frequency), and
// the share of significant paths in words (src/core/verdict runPaths).
import type { PathResult, SpecificationCurve } from '../../../core/verdict/index.ts';
import type { Row } from '../../../queries/client.ts';

const hz = (r: readonly number[]) => `${r[0]}–${r[1]} Hz`;

/** The value a path took for each choice (null: the choice does not apply to its measure). */
export function pathChoiceValues(p: PathResult): { choice: string; value: string | null }[] {
  return [
    {
      choice: 'measure',
      value: p.measure === 'absolute' ? 'absolute log10 power' : p.measure === 'relative' ? `relative to ${hz(p.denominatorHz!)}` : 'residual',
    },
    { choice: 'reference', value: p.reference },
    { choice: 'averaging', value: `${p.averaging} over epochs` },
    { choice: 'estimator', value: p.estimator === 'welch' ? 'Welch' : 'multitaper' },
    { choice: 'summary', value: p.summary === null ? null : p.summary === 'mean' ? 'mean density' : 'integral' },
    { choice: 'fit range', value: p.fitRangeHz === null ? null : `fit ${hz(p.fitRangeHz)}` },
    { choice: 'band edges', value: `band ${hz([p.band.loHz, p.band.hiHz])}` },
    { choice: 'band definition', value: p.bandDefinition === 'fixed' ? 'fixed band' : 'individual band' },
    { choice: 'decision', value: p.decision === 'power-and-frequency' ? 'decided on power and peak centre' : 'decided on power' },
  ];
}

export interface MatrixRow {
  choice: string;
  value: string;
  /** label on the matrix's y axis */
  label: string;
}

/** Rows of the dot matrix: every value a varied choice took (choices with one value are left out and returned as fixed). */
export function matrixRows(curve: SpecificationCurve): { rows: MatrixRow[]; fixed: string[] } {
  const seen = new Map<string, string[]>();
  // values in the order the paths were enumerated (the order of the choices), not the curve's
  for (const p of [...curve.paths].sort((a, b) => a.id - b.id)) {
    for (const { choice, value } of pathChoiceValues(p)) {
      if (value === null) continue;
      const vs = seen.get(choice) ?? [];
      if (!vs.includes(value)) vs.push(value);
      seen.set(choice, vs);
    }
  }
  const rows: MatrixRow[] = [];
  const fixed: string[] = [];
  for (const [choice, values] of seen) {
    if (values.length < 2) fixed.push(`${choice}: ${values[0]}`);
    else for (const value of values) rows.push({ choice, value, label: choice === 'reference' ? `reference ${value}` : value });
  }
  return { rows, fixed };
}

/** One dot per path and choice value it used. */
export function matrixDots(curve: SpecificationCurve, rows: readonly MatrixRow[]): { rank: number; label: string; significant: boolean }[] {
  const out: { rank: number; label: string; significant: boolean }[] = [];
  for (const p of curve.paths) {
    for (const { choice, value } of pathChoiceValues(p)) {
      const row = rows.find((r) => r.choice === choice && r.value === value);
      if (row) out.push({ rank: p.rank, label: row.label, significant: p.significant });
    }
  }
  return out;
}

const pct = (x: number) => `${(100 * x).toFixed(0)} %`;

/** The share of significant paths in one sentence. */
export function shareSentence(curve: SpecificationCurve): string {
  const kind = curve.paths[0]?.effectKind === 'hedges-g' ? 'g' : (curve.paths[0]?.effectKind ?? 'effect');
  const med = curve.medianEffect.toFixed(2).replace('-', '−');
  return (
    `${curve.nSignificant} of ${curve.nPaths} paths (${pct(curve.shareSignificant)}) have p < ${curve.alpha}; ` +
    `${curve.nSignificantMajoritySign} of them have the sign of the median effect (median ${kind} = ${med}).`
  );
}

/** Median of numbers (mean of the middle two for an even count). */
function median(x: readonly number[]): number {
  const s = [...x].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** The significant paths and the median effect per measure, in one sentence (effects of different measures are not pooled). */
export function measureSentence(curve: SpecificationCurve): string {
  const byMeasure = new Map<string, PathResult[]>();
  for (const p of [...curve.paths].sort((a, b) => a.id - b.id)) {
    // relative paths of several denominators are one measure
    const name = p.measure === 'relative' ? 'relative power' : pathChoiceValues(p)[0].value!;
    byMeasure.set(name, [...(byMeasure.get(name) ?? []), p]);
  }
  const parts = [...byMeasure].map(([name, ps]) => {
    const kind = ps[0].effectKind === 'hedges-g' ? 'g' : ps[0].effectKind;
    const med = median(ps.map((p) => p.effect))
      .toFixed(2)
      .replace('-', '−');
    return `${name}: ${ps.filter((p) => p.significant).length} of ${ps.length} paths with p < ${curve.alpha}, median ${kind} = ${med}`;
  });
  return `By measure — ${parts.join('; ')}.`;
}

const counts = (n: Record<string, number>) =>
  Object.entries(n)
    .map(([g, k]) => `${g} ${k}`)
    .join(', ');

/** The table of paths, in curve order; a path decided on power and frequency states its peak-centre test. */
export function pathRows(curve: SpecificationCurve): Row[] {
  return curve.paths.map((p) => ({
    rank: p.rank,
    path: p.id,
    description: p.description,
    effect: p.effect,
    ci_low: p.ciLow,
    ci_high: p.ciHigh,
    p: p.p,
    significant: p.significant,
    n: counts(p.n),
    decision: p.decision === 'power-and-frequency' ? 'power and peak centre' : 'power',
    centre_effect: p.frequency && Number.isFinite(p.frequency.effect) ? p.frequency.effect : null,
    centre_difference_hz: p.frequency?.differenceHz ?? null,
    centre_p: p.frequency ? (p.frequency.skipped ? null : p.frequency.p) : null,
    without_peak: p.frequency ? (p.frequency.skipped ?? counts(p.frequency.withoutPeak)) : null,
  }));
}
