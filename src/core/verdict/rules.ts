/**
 * The verdict of a band check: does a group (or condition, or covariate) effect in a band come
 * from the band's periodic component (its power, or the frequency of its peak), from a broadband
 * shift of the aperiodic offset, from a change of the aperiodic exponent (a tilt), from both, or
 * is there no evidence of any?
 *
 * DECISION RULES (thresholds; α = 0.05 unless the caller sets another)
 * Every test is a two-tailed permutation test of one value per subject (scalar-test.ts).
 * The decision family is four tests:
 *   periodic    — residual (log10 power minus the aperiodic fit) averaged over the band's bins;
 *   peak centre — centre frequency (Hz) of the highest fitted peak in the band, the mean over the
 *                 channels with one; subjects without a peak in the band on any channel are left
 *                 out of this test only (counted per group); with too few left (fewer than 2 per
 *                 group, or 3 in all) the test is not run and counts as not passing (p = 1);
 *   offset      — aperiodic offset;
 *   exponent    — aperiodic exponent;
 * corrected together by Bonferroni: a test passes when p ≤ α/4 (adjusted p = min(1, 4p)).
 * Without this, four tests at α would call a null effect something in up to ~19 % of cohorts;
 * with it, at most α. Bonferroni rather than Holm's step-down: each component is interpreted on
 * its own, and under Holm a strong offset effect would lower the periodic tests' thresholds
 * (a false "periodic" call in up to α/3 of pure offset effects instead of α/4).
 * Helper tests, not corrected, used only to tell the kinds of a passing effect apart:
 *   aperiodic-in-band — the fitted aperiodic component averaged over the band's bins (log10):
 *                       how much the aperiodic change alone moves the band's power;
 *   flanks            — log10 mean density in the ranges just below (L) and above (U) the band;
 *   tilt              — U − L per subject: a changed exponent moves the flanks unequally.
 * Rules, first match wins:
 *  1. no test of the family passes                                             → no-evidence
 *  2. periodic power or peak centre passes:
 *     a. periodic passes, offset or exponent passes, and aperiodic-in-band has p < α with the
 *        sign of the periodic effect (both push the band's power the same way, so the raw band
 *        effect is the sum of a band-specific and a broadband part)                → mixed
 *     b. periodic passes otherwise (no aperiodic change, or one that leaves the band's level
 *        unchanged or moves it the other way, so it cannot account for the band change; the
 *        sentence names it)                                                    → band-specific
 *     (with 2a and 2b a passing peak-centre test is named too: the peak also shifted)
 *     c. only the peak centre passes (the peak moved, its power did not), offset or exponent
 *        passes, and aperiodic-in-band has p < α (the band's level moves too, so the raw band
 *        effect is broadband while the peak shifts)                                → mixed
 *     d. only the peak centre passes otherwise (any aperiodic change named: it does not move a
 *        peak's centre above the fit)                                          → band-specific
 *  3. only offset and/or exponent pass:
 *     a. exponent passes and the tilt has p < α with the sign a steeper/flatter spectrum gives
 *        (sign(tilt) = −sign(exponent effect): a larger exponent lowers U more than L)
 *                                                                              → exponent-change
 *     b. offset passes and both flank effects have the sign of the offset effect
 *                                                                             → broadband-offset
 *     c. exponent passes (the flanks show no tilt; said in the sentence)        → exponent-change
 *     d. offset passes (the flanks do not both move with it; said)             → broadband-offset
 * A band-specific or mixed result names its periodic kind: 'power' (periodic passed),
 * 'frequency-shift' (peak centre passed) or 'power-and-frequency-shift' (both).
 * The raw band effect, the peak height and width, the relative-power effect and the
 * frequency-wise cluster test are reported beside the verdict but do not decide it.
 */
import type { ScalarTest } from './scalar-test.ts';

export const VERDICTS = ['band-specific', 'broadband-offset', 'exponent-change', 'mixed', 'no-evidence'] as const;
export type Verdict = (typeof VERDICTS)[number];

export type FamilyTest = 'periodic' | 'peakCenter' | 'offset' | 'exponent';

export interface FamilyStep {
  test: FamilyTest;
  p: number;
  /** α/m */
  threshold: number;
  /** Bonferroni-adjusted p: min(1, m·p) */
  adjustedP: number;
  passed: boolean;
}

/** Bonferroni over the decision family: pass when p ≤ α/m (Bonferroni inequality; common practice). */
export function bonferroni(tests: { test: FamilyTest; p: number }[], alpha: number): FamilyStep[] {
  const m = tests.length;
  return tests.map((t) => ({ test: t.test, p: t.p, threshold: alpha / m, adjustedP: Math.min(1, m * t.p), passed: t.p <= alpha / m }));
}

/** Which periodic tests passed, for a band-specific or mixed verdict. */
export type PeriodicKind = 'power' | 'frequency-shift' | 'power-and-frequency-shift';

/** The peak-centre test's inputs to the sentence. */
export interface PeakCenterInputs {
  /** null when too few subjects have a peak in the band to run it */
  test: ScalarTest | null;
  /** mean centre per group or condition (Hz), over the subjects in the test */
  means: { name: string; centerHz: number }[];
  /** subjects per group (or pairs, subjects) left out: no fitted peak in the band */
  withoutPeak: Record<string, number>;
  /** why the test did not run (null when it ran) */
  skipped: string | null;
}

export interface VerdictInputs {
  periodic: ScalarTest;
  peakCenter: PeakCenterInputs;
  offset: ScalarTest;
  exponent: ScalarTest;
  aperiodicInBand: ScalarTest;
  lowerFlank: ScalarTest | null;
  upperFlank: ScalarTest | null;
  tilt: ScalarTest | null;
}

/** Words for the direction of an effect: "higher in patient than in control", "rises with age". */
export interface DirectionWords {
  up: string;
  down: string;
}

export interface VerdictDecision {
  verdict: Verdict;
  /** the rule that fired (1, 2a … 2d, 3a … 3d) */
  rule: string;
  /** band-specific and mixed verdicts: which periodic tests passed; else null */
  periodicKind: PeriodicKind | null;
  sentence: string;
  family: FamilyStep[];
  alpha: number;
}

const sign = (t: ScalarTest): number => Math.sign(t.effect !== 0 ? t.effect : t.t);

/** Effect size and p for a sentence: "g = −1.20 [−1.9, −0.5], p = 0.002". */
export function describeTest(t: ScalarTest): string {
  const name = t.effectKind === 'hedges-g' ? 'g' : t.effectKind === 'r' ? 'r' : 'partial r';
  return `${name} = ${fmt(t.effect)} [${fmt(t.ciLow)}, ${fmt(t.ciHigh)}], p = ${formatP(t.p)}`;
}

export function fmt(x: number): string {
  return (Math.abs(x) < 0.005 ? 0 : x).toFixed(2).replace('-', '−');
}

export function formatP(p: number): string {
  return p < 0.001 ? p.toFixed(4) : p.toFixed(3);
}

/** A frequency difference in words: one decimal, two below 0.1 Hz. */
export function formatHz(x: number): string {
  return Math.abs(x).toFixed(Math.abs(x) < 0.095 ? 2 : 1);
}

/** "control 1, patient 0" */
const countsText = (c: Record<string, number>) =>
  Object.entries(c)
    .map(([g, k]) => `${g} ${k}`)
    .join(', ');

/** The peak-centre test in words: "the sigma peak is 1.0 Hz lower in patient than in control (…)". */
function shiftWords(x: PeakCenterInputs, bandName: string, words: DirectionWords, adjusted: string): string {
  const t = x.test!;
  const dir = sign(t) > 0 ? words.up : words.down;
  const means = x.means.map((m) => `${m.centerHz.toFixed(2)} Hz in ${m.name}`).join(', ');
  const left = Object.values(x.withoutPeak).some((k) => k > 0) ? `; left out without a peak in the band: ${countsText(x.withoutPeak)}` : '';
  const detail = `centre of the highest fitted peak in the band${x.means.length > 1 ? `, mean ${means}` : ''}; ${describeTest(t)}; ${adjusted}${left}`;
  // a correlation has no difference in Hz: the direction only
  return t.difference === null
    ? `the ${bandName} peak frequency is ${dir} (${detail})`
    : `the ${bandName} peak is ${formatHz(t.difference)} Hz ${dir} (${detail})`;
}

export function decideVerdict(x: VerdictInputs, bandName: string, words: DirectionWords, alpha = 0.05): VerdictDecision {
  const C = x.peakCenter;
  const steps = bonferroni(
    [
      { test: 'periodic', p: x.periodic.p },
      { test: 'peakCenter', p: C.test ? C.test.p : 1 },
      { test: 'offset', p: x.offset.p },
      { test: 'exponent', p: x.exponent.p },
    ],
    alpha,
  );
  const [P, F, O, E] = steps.map((s) => s.passed);
  const m = steps.length;
  const dir = (t: ScalarTest) => (sign(t) > 0 ? words.up : words.down);
  const adj = (i: number) => `adjusted p = ${formatP(steps[i].adjustedP)}`;
  const per = `the periodic ${bandName} power (residual above the aperiodic fit, ${describeTest(x.periodic)}; ${adj(0)})`;
  const off = `the aperiodic offset (${describeTest(x.offset)}; ${adj(2)})`;
  const exp = `the aperiodic exponent (${describeTest(x.exponent)}; ${adj(3)})`;
  const shift = F ? shiftWords(C, bandName, words, adj(1)) : '';
  const noShift = C.test
    ? `the ${bandName} peak centre does not move (${describeTest(C.test)}; ${adj(1)})`
    : `the ${bandName} peak centre is not tested (${C.skipped})`;
  const inBand = `the aperiodic level in the band (${describeTest(x.aperiodicInBand)})`;
  const inBandBare = `aperiodic level in the band ${describeTest(x.aperiodicInBand)}`;
  const kind: PeriodicKind | null = P && F ? 'power-and-frequency-shift' : P ? 'power' : F ? 'frequency-shift' : null;
  const done = (verdict: Verdict, rule: string, sentence: string): VerdictDecision => ({
    verdict,
    rule,
    periodicKind: verdict === 'band-specific' || verdict === 'mixed' ? kind : null,
    sentence,
    family: steps,
    alpha,
  });

  if (!P && !F && !O && !E) {
    return done(
      'no-evidence',
      '1',
      `No evidence: neither ${per} nor ${off} nor ${exp} differs, and ${noShift}, at α = ${alpha} after Bonferroni correction over these ${m} tests.`,
    );
  }
  const aperiodicPasses = O || E;
  const ap = [O ? off : null, E ? exp : null].filter(Boolean).join(' and ');
  if (P) {
    // a peak that moves toward or away from a band edge changes the power averaged over the band by itself
    const also = F ? `; ${shift}; part of the power change may come from the peak moving relative to the band's edges` : '';
    if (aperiodicPasses && x.aperiodicInBand.p < alpha && sign(x.aperiodicInBand) === sign(x.periodic)) {
      return done(
        'mixed',
        '2a',
        `Mixed: ${per} is ${dir(x.periodic)}${also}, and ${ap} also differs, so that ${inBand} is ${dir(x.aperiodicInBand)} as well: the raw band effect is partly band-specific and partly broadband.`,
      );
    }
    if (aperiodicPasses) {
      const why = x.aperiodicInBand.p < alpha ? `moves the band's level the other way (${inBandBare})` : `leaves the band's level unchanged (${inBandBare})`;
      return done(
        'band-specific',
        '2b',
        `Band-specific: ${per} is ${dir(x.periodic)}${also}; ${ap} also differs but ${why}, so it cannot account for the band change.`,
      );
    }
    return done('band-specific', '2b', `Band-specific: ${per} is ${dir(x.periodic)}${also}, while neither ${off} nor ${exp} differs.`);
  }
  const samePower = `while ${per} does not differ`;
  if (F) {
    if (aperiodicPasses && x.aperiodicInBand.p < alpha) {
      return done(
        'mixed',
        '2c',
        `Mixed: ${shift}, ${samePower}; ${ap} also differs, so that ${inBand} is ${dir(x.aperiodicInBand)}: the peak shifts while the band's power changes broadband.`,
      );
    }
    if (aperiodicPasses) {
      return done(
        'band-specific',
        '2d',
        `Band-specific frequency shift: ${shift}, ${samePower}; ${ap} also differs but leaves the band's level unchanged (${inBandBare}), and an aperiodic change does not move a peak's centre above the fit.`,
      );
    }
    return done('band-specific', '2d', `Band-specific frequency shift: ${shift}, ${samePower}, and neither ${off} nor ${exp} differs.`);
  }
  const { lowerFlank: L, upperFlank: U, tilt: T } = x;
  const flanks = [L ? `lower flank ${describeTest(L)}` : null, U ? `upper flank ${describeTest(U)}` : null].filter(Boolean).join('; ');
  const noPer = `the periodic part does not differ (power ${describeTest(x.periodic)}, ${adj(0)}; ${C.test ? `peak centre ${describeTest(C.test)}, ${adj(1)}` : `peak centre not tested: ${C.skipped}`})`;
  if (E && T && T.p < alpha && sign(T) === -sign(x.exponent)) {
    return done(
      'exponent-change',
      '3a',
      `Exponent change: ${exp} is ${dir(x.exponent)} and the flanks tilt accordingly (upper minus lower flank ${describeTest(T)}), while ${noPer}.`,
    );
  }
  const sameWay = (f: ScalarTest | null) => f === null || sign(f) === sign(x.offset);
  if (O && (L || U) && sameWay(L) && sameWay(U)) {
    return done(
      'broadband-offset',
      '3b',
      `Broadband offset shift: ${off} is ${dir(x.offset)}, the flanks below and above the band move the same way (${flanks}), and ${noPer}.`,
    );
  }
  if (E) {
    return done(
      'exponent-change',
      '3c',
      `Exponent change: ${exp} is ${dir(x.exponent)} and ${noPer}; the flanks do not show a clear tilt (${T ? `upper minus lower flank ${describeTest(T)}` : 'no room for both flanks'}).`,
    );
  }
  return done(
    'broadband-offset',
    '3d',
    `Broadband offset shift: ${off} is ${dir(x.offset)} and ${noPer}; the flanks do not both move with it (${flanks || 'no room for flanks'}).`,
  );
}
