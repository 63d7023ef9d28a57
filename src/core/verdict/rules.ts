/**
 * The verdict of a band check: does a group (or condition, or covariate) effect in a band come
 * from the band's periodic power, from a broadband shift of the aperiodic offset, from a change
 * of the aperiodic exponent (a tilt), from both, or is there no evidence of any?
 *
 * DECISION RULES (thresholds; α = 0.05 unless the caller sets another)
 * Every test is a two-tailed permutation test of one value per subject (scalar-test.ts).
 * The decision family is three tests:
 *   periodic  — residual (log10 power minus the aperiodic fit) averaged over the band's bins;
 *   offset    — aperiodic offset;
 *   exponent  — aperiodic exponent;
 * corrected together by Bonferroni: a test passes when p ≤ α/3 (adjusted p = min(1, 3p)).
 * Without this, three tests at α would call a null effect something in up to ~14 % of cohorts;
 * with it, at most α. Bonferroni rather than Holm's step-down: each component is interpreted on
 * its own, and under Holm a strong offset effect would lower the periodic test's threshold to
 * α/2 (a false "periodic" call in up to α/2 of pure offset effects instead of α/3).
 * Helper tests, not corrected, used only to tell the kinds of a passing effect apart:
 *   aperiodic-in-band — the fitted aperiodic component averaged over the band's bins (log10):
 *                       how much the aperiodic change alone moves the band's power;
 *   flanks            — log10 mean density in the ranges just below (L) and above (U) the band;
 *   tilt              — U − L per subject: a changed exponent moves the flanks unequally.
 * Rules, first match wins:
 *  1. no test of the family passes                                             → no-evidence
 *  2. periodic passes:
 *     a. offset or exponent passes, and aperiodic-in-band has p < α with the sign of the
 *        periodic effect (both push the band's power the same way, so the raw band effect is
 *        the sum of a band-specific and a broadband part)                          → mixed
 *     b. otherwise (no aperiodic change, or one that leaves the band's level unchanged or moves
 *        it the other way, so it cannot account for the band change; the sentence names it)
 *                                                                                → band-specific
 *  3. only offset and/or exponent pass:
 *     a. exponent passes and the tilt has p < α with the sign a steeper/flatter spectrum gives
 *        (sign(tilt) = −sign(exponent effect): a larger exponent lowers U more than L)
 *                                                                              → exponent-change
 *     b. offset passes and both flank effects have the sign of the offset effect
 *                                                                             → broadband-offset
 *     c. exponent passes (the flanks show no tilt; said in the sentence)        → exponent-change
 *     d. offset passes (the flanks do not both move with it; said)             → broadband-offset
 * The raw band effect, the peak height, the relative-power effect and the frequency-wise
 * cluster test are reported beside the verdict but do not decide it.
 */
import type { ScalarTest } from './scalar-test.ts';

export const VERDICTS = ['band-specific', 'broadband-offset', 'exponent-change', 'mixed', 'no-evidence'] as const;
export type Verdict = (typeof VERDICTS)[number];

export interface FamilyStep {
  test: 'periodic' | 'offset' | 'exponent';
  p: number;
  /** α/m */
  threshold: number;
  /** Bonferroni-adjusted p: min(1, m·p) */
  adjustedP: number;
  passed: boolean;
}

/** Bonferroni over the decision family: pass when p ≤ α/m (Bonferroni inequality; common practice). */
export function bonferroni(tests: { test: FamilyStep['test']; p: number }[], alpha: number): FamilyStep[] {
  const m = tests.length;
  return tests.map((t) => ({ test: t.test, p: t.p, threshold: alpha / m, adjustedP: Math.min(1, m * t.p), passed: t.p <= alpha / m }));
}

export interface VerdictInputs {
  periodic: ScalarTest;
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
  /** the rule that fired (1, 2a, 2b, 3a … 3d) */
  rule: string;
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

export function decideVerdict(x: VerdictInputs, bandName: string, words: DirectionWords, alpha = 0.05): VerdictDecision {
  const steps = bonferroni([{ test: 'periodic', p: x.periodic.p }, { test: 'offset', p: x.offset.p }, { test: 'exponent', p: x.exponent.p }], alpha);
  const [P, O, E] = steps.map((s) => s.passed);
  const dir = (t: ScalarTest) => (sign(t) > 0 ? words.up : words.down);
  const adj = (i: number) => `adjusted p = ${formatP(steps[i].adjustedP)}`;
  const per = `the periodic ${bandName} power (residual above the aperiodic fit, ${describeTest(x.periodic)}; ${adj(0)})`;
  const off = `the aperiodic offset (${describeTest(x.offset)}; ${adj(1)})`;
  const exp = `the aperiodic exponent (${describeTest(x.exponent)}; ${adj(2)})`;
  const inBand = `the aperiodic level in the band (${describeTest(x.aperiodicInBand)})`;
  const inBandBare = `aperiodic level in the band ${describeTest(x.aperiodicInBand)}`;
  const done = (verdict: Verdict, rule: string, sentence: string): VerdictDecision => ({ verdict, rule, sentence, family: steps, alpha });

  if (!P && !O && !E) {
    return done('no-evidence', '1', `No evidence: neither ${per} nor ${off} nor ${exp} differs at α = ${alpha} after Bonferroni correction over these three tests.`);
  }
  if (P) {
    const aperiodicPasses = O || E;
    const ap = [O ? off : null, E ? exp : null].filter(Boolean).join(' and ');
    if (aperiodicPasses && x.aperiodicInBand.p < alpha && sign(x.aperiodicInBand) === sign(x.periodic)) {
      return done('mixed', '2a', `Mixed: ${per} is ${dir(x.periodic)}, and ${ap} also differs, so that ${inBand} is ${dir(x.aperiodicInBand)} as well: the raw band effect is partly band-specific and partly broadband.`);
    }
    if (aperiodicPasses) {
      const why = x.aperiodicInBand.p < alpha ? `moves the band's level the other way (${inBandBare})` : `leaves the band's level unchanged (${inBandBare})`;
      return done('band-specific', '2b', `Band-specific: ${per} is ${dir(x.periodic)}; ${ap} also differs but ${why}, so it cannot account for the band change.`);
    }
    return done('band-specific', '2b', `Band-specific: ${per} is ${dir(x.periodic)}, while neither ${off} nor ${exp} differs.`);
  }
  const { lowerFlank: L, upperFlank: U, tilt: T } = x;
  const flanks = [L ? `lower flank ${describeTest(L)}` : null, U ? `upper flank ${describeTest(U)}` : null].filter(Boolean).join('; ');
  const noPer = `the periodic part does not differ (${describeTest(x.periodic)}; ${adj(0)})`;
  if (E && T && T.p < alpha && sign(T) === -sign(x.exponent)) {
    return done('exponent-change', '3a', `Exponent change: ${exp} is ${dir(x.exponent)} and the flanks tilt accordingly (upper minus lower flank ${describeTest(T)}), while ${noPer}.`);
  }
  const sameWay = (f: ScalarTest | null) => f === null || sign(f) === sign(x.offset);
  if (O && (L || U) && sameWay(L) && sameWay(U)) {
    return done('broadband-offset', '3b', `Broadband offset shift: ${off} is ${dir(x.offset)}, the flanks below and above the band move the same way (${flanks}), and ${noPer}.`);
  }
  if (E) {
    return done('exponent-change', '3c', `Exponent change: ${exp} is ${dir(x.exponent)} and ${noPer}; the flanks do not show a clear tilt (${T ? `upper minus lower flank ${describeTest(T)}` : 'no room for both flanks'}).`);
  }
  return done('broadband-offset', '3d', `Broadband offset shift: ${off} is ${dir(x.offset)} and ${noPer}; the flanks do not both move with it (${flanks || 'no room for flanks'}).`);
}
