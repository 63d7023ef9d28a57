// The band check view's table: one row per effect of a band check result (src/core/verdict).
import type { BandCheckResult, BandCheckTests } from '../../../core/verdict/index.ts';
import type { Row } from '../../../queries/client.ts';

/** The effects in the order the table shows them, with their names on screen. */
export const EFFECTS: readonly { key: keyof BandCheckTests; label: string; decides: boolean }[] = [
  { key: 'raw', label: 'raw band power', decides: false },
  { key: 'offset', label: 'aperiodic offset', decides: true },
  { key: 'exponent', label: 'aperiodic exponent', decides: true },
  { key: 'periodic', label: 'periodic residual', decides: true },
  { key: 'peakHeight', label: 'peak height', decides: false },
  { key: 'aperiodicInBand', label: 'aperiodic level in the band', decides: false },
  { key: 'lowerFlank', label: 'lower flank', decides: false },
  { key: 'upperFlank', label: 'upper flank', decides: false },
  { key: 'tilt', label: 'flank difference (upper − lower)', decides: false },
  { key: 'relative', label: 'relative band power', decides: false },
];

/** Bonferroni-adjusted p of the decision family's tests. */
function adjustedP(r: BandCheckResult, key: keyof BandCheckTests): number | null {
  return r.family.find((f) => f.test === key)?.adjustedP ?? null;
}

/** One row per effect: size with its interval, p (and the adjusted p of the verdict's three tests); missing flanks say why. */
export function effectRows(r: BandCheckResult): Row[] {
  return EFFECTS.map(({ key, label, decides }) => {
    const t = r.tests[key];
    if (t === null) return { effect: label, measure: r.flanks.note ?? 'no room for this flank inside the fit range', kind: null, size: null, ci_low: null, ci_high: null, difference: null, t: null, p: null, p_adjusted: null, decides };
    return {
      effect: label,
      measure: t.measure,
      kind: t.effectKind === 'hedges-g' ? "Hedges' g" : t.effectKind,
      size: t.effect,
      ci_low: t.ciLow,
      ci_high: t.ciHigh,
      difference: t.difference,
      t: t.t,
      p: t.p,
      p_adjusted: decides ? adjustedP(r, key) : null,
      decides,
    };
  });
}

/** Group sizes in words: "control 20, patient 19". */
export function sizesText(n: Record<string, number>): string {
  return Object.entries(n).map(([g, k]) => `${g} ${k}`).join(', ');
}
