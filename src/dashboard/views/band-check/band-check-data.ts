// The band check view's table: one row per effect of a band check result (src/core/verdict).
import type { BandCheckResult, BandCheckTests, PeriodicKind } from '../../../core/verdict/index.ts';
import type { Row } from '../../../queries/client.ts';

/** The effects in the order the table shows them, with their names on screen; `decides`: one of the decision family's four tests. */
export const EFFECTS: readonly { key: keyof BandCheckTests; label: string; decides: boolean }[] = [
  { key: 'raw', label: 'raw band power', decides: false },
  { key: 'offset', label: 'aperiodic offset', decides: true },
  { key: 'exponent', label: 'aperiodic exponent', decides: true },
  { key: 'periodic', label: 'periodic residual', decides: true },
  { key: 'peakCenter', label: 'peak centre frequency', decides: true },
  { key: 'peakWidth', label: 'peak width', decides: false },
  { key: 'peakHeight', label: 'peak height', decides: false },
  { key: 'aperiodicInBand', label: 'aperiodic level in the band', decides: false },
  { key: 'lowerFlank', label: 'lower flank', decides: false },
  { key: 'upperFlank', label: 'upper flank', decides: false },
  { key: 'tilt', label: 'flank difference (upper − lower)', decides: false },
  { key: 'relative', label: 'relative band power', decides: false },
];

/** Bonferroni-adjusted p of the decision family's tests, as the core computed it. */
function adjustedP(r: BandCheckResult, key: keyof BandCheckTests): number | null {
  return r.family.find((f) => f.test === key)?.adjustedP ?? null;
}

/** Why a test has no value: a flank without room, or a peak test without enough subjects with a peak. */
function missingText(r: BandCheckResult, key: keyof BandCheckTests): string {
  if (key === 'peakCenter' || key === 'peakWidth') return `not run: ${r.peakCenter.skipped ?? 'too few subjects with a fitted peak in the band'}`;
  return r.flanks.note ?? 'no room for this flank inside the fit range';
}

/** One row per effect: size with its interval, p (and the adjusted p of the verdict's four tests); a missing test says why. */
export function effectRows(r: BandCheckResult): Row[] {
  return EFFECTS.map(({ key, label, decides }) => {
    const t = r.tests[key];
    if (t === null)
      return {
        effect: label,
        measure: missingText(r, key),
        kind: null,
        size: null,
        ci_low: null,
        ci_high: null,
        difference: null,
        t: null,
        p: null,
        p_adjusted: null,
        decides,
      };
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

/** What a band-specific or mixed verdict found in the band's periodic part, in words (null for the other verdicts). */
export function periodicKindText(kind: PeriodicKind | null): string | null {
  if (kind === 'power') return 'a change of the periodic power (no shift of the peak frequency found)';
  if (kind === 'frequency-shift') return 'a shift of the peak frequency (no change of the periodic power found)';
  if (kind === 'power-and-frequency-shift') return 'a change of the periodic power and a shift of the peak frequency';
  return null;
}

/** The decision family in words: "periodic power, peak centre frequency, aperiodic offset and aperiodic exponent: 4 tests, Bonferroni-corrected at α = 0.05 (each passes at p ≤ 0.0125)". */
export function familyText(r: BandCheckResult): string {
  const names: Record<string, string> = {
    periodic: 'periodic power',
    peakCenter: 'peak centre frequency',
    offset: 'aperiodic offset',
    exponent: 'aperiodic exponent',
  };
  const list = r.family.map((f) => names[f.test] ?? f.test);
  const words = list.length > 1 ? `${list.slice(0, -1).join(', ')} and ${list[list.length - 1]}` : list.join('');
  return `${words}: ${r.family.length} tests, Bonferroni-corrected at α = ${r.alpha} (each passes at p ≤ ${Number((r.alpha / r.family.length).toPrecision(4))})`;
}

/** The frequency test's subjects and group means: "Mean centre of the highest fitted peak in the band: 13.52 Hz in control (…). <how subjects without a peak are treated>". */
export function peakCentreText(r: BandCheckResult): string {
  const s = r.peakCenter;
  const means = s.means.map((m) => `${m.centerHz.toFixed(2)} Hz in ${m.name} (width ${m.widthHz.toFixed(2)} Hz, n ${m.n})`).join(', ');
  return [means ? `Mean centre of the highest fitted peak in the band: ${means}.` : null, s.skipped ? `Peak centre not tested: ${s.skipped}.` : null, s.note]
    .filter(Boolean)
    .join(' ');
}

/** Group sizes in words: "control 20, patient 19". */
export function sizesText(n: Record<string, number>): string {
  return Object.entries(n)
    .map(([g, k]) => `${g} ${k}`)
    .join(', ');
}
