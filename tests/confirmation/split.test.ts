// The split of the subjects (src/core/confirmation/split.ts) on generated cohorts: stratified
// (per stratum the exploration part takes ⌊F·n⌋ or ⌈F·n⌉, so at F = 0.5 the two parts differ by at
// most one), the exploration part holds round(F·N) subjects in all (largest-remainder allocation,
// common practice), disjoint and covering, and deterministic from its seed. Group codes of the
// blinding: a permutation drawn from the seed, each mapping about equally often (binomial interval
// from @stdlib/stats-base-dists-binomial-quantile).
import binomialQuantile from '@stdlib/stats-base-dists-binomial-quantile';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { codeNames, drawGroupCodes, labelsTellGroups } from '../../src/core/confirmation/blinding.ts';
import { drawSplit, SplitError, stratumOf, type SplitSubject } from '../../src/core/confirmation/split.ts';

/** A generated cohort: subjects s0…s(n−1), each in one of `strata` strata (sizes from the arbitrary). */
const cohort = fc
  .array(fc.integer({ min: 0, max: 5 }), { minLength: 2, maxLength: 120 })
  .map((strata) => strata.map((k, i): SplitSubject => ({ subject: `s${i}`, stratum: `stratum ${k}` })));
const fraction = fc.double({ min: 0.05, max: 0.95, noNaN: true });
const seed = fc.integer({ min: 0, max: 2 ** 31 - 1 });

function perStratum(subjects: readonly SplitSubject[], parts: Map<string, string>): Map<string, { n: number; explore: number }> {
  const out = new Map<string, { n: number; explore: number }>();
  for (const s of subjects) {
    const x = out.get(s.stratum) ?? { n: 0, explore: 0 };
    x.n++;
    if (parts.get(s.subject) === 'exploration') x.explore++;
    out.set(s.stratum, x);
  }
  return out;
}

describe('drawSplit on generated cohorts (fast-check, 300 cohorts per property)', () => {
  it('every subject is in exactly one part; the parts are disjoint and cover the cohort', () => {
    fc.assert(
      fc.property(cohort, fraction, seed, (subjects, f, s) => {
        let parts: Map<string, string>;
        try {
          parts = drawSplit(subjects, { fraction: f, seed: s, stratify: ['group'] });
        } catch (e) {
          // a cohort too small for the fraction leaves a part empty: refused, never returned
          expect(e).toBeInstanceOf(SplitError);
          expect([0, subjects.length]).toContain(Math.round(f * subjects.length));
          return;
        }
        expect([...parts.keys()].sort()).toEqual(subjects.map((x) => x.subject).sort());
        const explore = subjects.filter((x) => parts.get(x.subject) === 'exploration').map((x) => x.subject);
        const confirm = subjects.filter((x) => parts.get(x.subject) === 'confirmation').map((x) => x.subject);
        expect(explore.length + confirm.length).toBe(subjects.length);
        expect(explore.filter((x) => confirm.includes(x))).toEqual([]);
        expect(explore.length).toBeGreaterThan(0);
        expect(confirm.length).toBeGreaterThan(0);
      }),
      { numRuns: 300 },
    );
  });

  it('stratified: each stratum explores ⌊F·n⌋ or ⌈F·n⌉ subjects, and round(F·N) explore in all', () => {
    fc.assert(
      fc.property(cohort, fraction, seed, (subjects, f, s) => {
        if ([0, subjects.length].includes(Math.round(f * subjects.length))) return;
        const parts = drawSplit(subjects, { fraction: f, seed: s, stratify: ['group'] });
        for (const { n, explore } of perStratum(subjects, parts).values()) {
          expect(explore).toBeGreaterThanOrEqual(Math.floor(f * n));
          expect(explore).toBeLessThanOrEqual(Math.ceil(f * n));
        }
        expect([...parts.values()].filter((p) => p === 'exploration').length).toBe(Math.round(f * subjects.length));
      }),
      { numRuns: 300 },
    );
  });

  it('at fraction 0.5 the two parts of every stratum differ by at most one subject', () => {
    fc.assert(
      fc.property(cohort, seed, (subjects, s) => {
        if (subjects.length < 2) return;
        const parts = drawSplit(subjects, { fraction: 0.5, seed: s, stratify: ['group'] });
        for (const { n, explore } of perStratum(subjects, parts).values()) expect(Math.abs(explore - (n - explore))).toBeLessThanOrEqual(1);
      }),
      { numRuns: 300 },
    );
  });

  it('deterministic from its seed, whatever the order the subjects come in; another seed gives another split', () => {
    fc.assert(
      fc.property(cohort, seed, (subjects, s) => {
        if (subjects.length < 2) return;
        const a = drawSplit(subjects, { fraction: 0.5, seed: s, stratify: [] });
        const b = drawSplit([...subjects].reverse(), { fraction: 0.5, seed: s, stratify: [] });
        expect([...b].sort()).toEqual([...a].sort());
      }),
      { numRuns: 300 },
    );
    // 40 subjects in two strata: C(20,10)² ≈ 3.4e10 splits, so two seeds agree by chance with negligible probability
    const forty = Array.from({ length: 40 }, (_, i) => ({ subject: `s${i}`, stratum: i % 2 ? 'a' : 'b' }));
    const split = (s: number) => JSON.stringify([...drawSplit(forty, { fraction: 0.5, seed: s, stratify: ['g'] })].sort());
    expect(split(1)).toBe(split(1));
    expect(split(1)).not.toBe(split(2));
  });

  it('refuses a bad fraction or seed and a repeated subject, naming the value', () => {
    const two = [
      { subject: 'a', stratum: 'x' },
      { subject: 'b', stratum: 'x' },
    ];
    expect(() => drawSplit(two, { fraction: 1, seed: 1, stratify: [] })).toThrow('invalid fraction: 1');
    expect(() => drawSplit(two, { fraction: 0.5, seed: 1.5, stratify: [] })).toThrow('invalid seed: 1.5');
    expect(() => drawSplit([...two, two[0]], { fraction: 0.5, seed: 1, stratify: [] })).toThrow('a subject is listed twice');
  });

  it("strata are the stratifying columns' values, a missing value its own stratum", () => {
    expect(stratumOf({ group: 'b', sex: 'F' }, ['group', 'sex'])).toBe('["b","F"]');
    expect(stratumOf({ group: null }, ['group'])).toBe('[null]');
    expect(stratumOf({ group: 'b' }, [])).toBe('[]');
  });
});

describe('group codes of the blinding', () => {
  it('a permutation of group A, group B, … over the sorted values, the same for the same seed', () => {
    const codes = drawGroupCodes(['pa', 'ct', 'pa', 'zz'], 11);
    expect(Object.keys(codes).sort()).toEqual(['ct', 'pa', 'zz']);
    expect(Object.values(codes).sort()).toEqual(codeNames(3));
    expect(drawGroupCodes(['zz', 'ct', 'pa'], 11)).toEqual(codes);
    expect(() => drawGroupCodes(['only'], 1)).toThrow('blinding needs at least two groups');
  });

  it('over 2000 seeds each of the two mappings of two groups comes up about half the time (99 % binomial interval)', () => {
    const seeds = 2000;
    let first = 0;
    for (let s = 0; s < seeds; s++) if (drawGroupCodes(['control', 'patient'], s).control === 'group A') first++;
    // 99 % central interval of Binomial(2000, 0.5), @stdlib/stats-base-dists-binomial-quantile
    expect(first).toBeGreaterThanOrEqual(binomialQuantile(0.005, seeds, 0.5));
    expect(first).toBeLessThanOrEqual(binomialQuantile(0.995, seeds, 0.5));
  });

  it('tells when subject labels give the groups away (a shared beginning per group, found in no other group)', () => {
    const rows = (labels: [string, string][]) => labels.map(([subject, group]) => ({ subject, group }));
    expect(
      labelsTellGroups(
        rows([
          ['ctl01', 'c'],
          ['ctl02', 'c'],
          ['pat01', 'p'],
          ['pat02', 'p'],
        ]),
      ),
    ).toBe(true);
    expect(
      labelsTellGroups(
        rows([
          ['s01', 'c'],
          ['s02', 'p'],
          ['s03', 'c'],
          ['s04', 'p'],
        ]),
      ),
    ).toBe(false);
    // "s0" is shared by both groups' labels: it tells nothing
    expect(
      labelsTellGroups(
        rows([
          ['s01', 'c'],
          ['s02', 'c'],
          ['s03', 'p'],
          ['s04', 'p'],
        ]),
      ),
    ).toBe(false);
  });
});
