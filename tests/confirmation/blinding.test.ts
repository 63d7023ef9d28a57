// Blinding (src/core/confirmation): while exploring, a contrast on the blinded groups names them
// by their codes, the rows carry the codes, and a result keeps every statistic but pools every
// count per group (a count per coded group would tell the codes apart to anyone who knows the real
// group sizes). Checked on a synthetic cohort whose groups differ in size (16 vs 12 explored).
import { describe, expect, it } from 'vitest';
import { BlindingError, requireCodedGroups, unblindContrast, type Blinding } from '../../src/core/confirmation/blinding.ts';
import { blindCompareResult, POOLED } from '../../src/core/confirmation/blind-results.ts';
import { partData, type PartView } from '../../src/core/confirmation/part-data.ts';
import { compareOnPart } from '../../src/core/confirmation/part-result.ts';
import type { ContrastData, PeakRow } from '../../src/core/contrast/data.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { Random } from '../../src/core/stats/random.ts';
import { syntheticCohort } from './synthetic-cohort.ts';
import { perGroupNumbers } from './leaks.ts';

const blinding: Blinding = { column: 'group', codes: { control: 'group B', patient: 'group A' } };
const stamp = {
  id: 'abc',
  madeAt: '2000-01-01T00:00:00.000Z',
  seed: 1,
  fraction: 0.5,
  stratify: ['group'],
  blindColumn: 'group',
  subjects: { exploration: 28, confirmation: 12 },
};

/** 40 subjects (control and patient alternate); 28 explore: the first 32 but four patients, so 16 controls and 12 patients. A peak on C3 for everyone, on C4 for two subjects only. */
function cohort(): { data: ContrastData; view: PartView } {
  const data = syntheticCohort(40, 3, { offsetLog10: 0.1, exponent: 0, sigmaHeightLog10: 0 });
  const rng = new Random(4);
  const peaks: PeakRow[] = [];
  data.participants.forEach((p, i) => {
    peaks.push({ subject: String(p.subject), session: null, channel: 'C3', stage: 'N2', centerHz: 13 + 0.5 * rng.normal(), height: 0.3, bandwidthHz: 1 });
    if (i < 2) peaks.push({ subject: String(p.subject), session: null, channel: 'C4', stage: 'N2', centerHz: 13, height: 0.3, bandwidthHz: 1 });
  });
  // unequal explored groups: drop 4 patients (odd indices) from the exploration part
  const explore = data.participants.map((p) => String(p.subject)).filter((_, i) => i < 32 && !(i % 2 === 1 && i >= 24));
  return { data: { ...data, peaks }, view: { split: stamp, part: 'exploration', subjects: new Set(explore), blinding } };
}

describe('blinded exploration', () => {
  it('rows of the part only, the group column coded; real group names refused without echoing them', () => {
    const { data, view } = cohort();
    const c = parseContrast({ design: 'groups', groups: ['group B', 'group A'], stage: 'N2' });
    const d = partData(c, data, view);
    expect(new Set(d.spectra.rows.map((r) => r.subject))).toEqual(view.subjects);
    expect(new Set(d.participants.map((p) => p.group))).toEqual(new Set(['group A', 'group B']));
    expect(d.participants.length).toBe(28);
    const real = parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2' });
    expect(() => partData(real, data, view)).toThrow(BlindingError);
    try {
      requireCodedGroups(real, blinding);
    } catch (e) {
      expect((e as Error).message).toBe('the groups of "group" are blinded while exploring: name them by their codes (group A, group B)');
    }
    // designs that do not compare the blinded groups need no codes
    expect(() => requireCodedGroups(parseContrast({ design: 'covariate', covariate: 'age', stage: 'N2' }), blinding)).not.toThrow();
  });

  it('a result keeps its statistics and pools every count per group (16 vs 12 explored)', () => {
    const { data, view } = cohort();
    const c = parseContrast({ design: 'groups', groups: ['group B', 'group A'], stage: 'N2', measure: 'peak-center', bands: ['sigma'], permutations: 200 });
    const plain = compare(c, partData(c, data, view));
    expect(plain.n).toEqual({ 'group B': 16, 'group A': 12 });
    expect(plain.notes.join(' ')).toMatch(/group B 1, group A 1/);
    expect(perGroupNumbers(plain, ['group A', 'group B']).length).toBeGreaterThan(0);
    const r = compareOnPart(plain, view);
    expect(r.blinded).toBe(true);
    expect(r.part).toBe('exploration');
    expect(r.n).toEqual({ [POOLED]: 28 });
    expect(r.subjects.every((s) => s.group === null)).toBe(true);
    expect(r.statistics.nPerGroup).toBeNull();
    expect(r.notes.join(' ')).toMatch(/both groups 2/);
    expect(perGroupNumbers(r, ['group A', 'group B'])).toEqual([]);
    // the statistics are those of the unblinded result
    expect(r.statistics.stat).toEqual(plain.statistics.stat);
    expect(r.statistics.pUncorrected).toEqual(plain.statistics.pUncorrected);
    expect(r.clusters).toEqual(plain.clusters);
    expect({ ...r, part: undefined, split: undefined, blinded: undefined }).toEqual({
      ...blindCompareResult(plain),
      part: undefined,
      split: undefined,
      blinded: undefined,
    });
  });

  it('a plan locked with the codes runs on the real groups; a plan that mixes codes and values is refused', () => {
    const coded = parseContrast({ design: 'groups', groups: ['group A', 'group B'], stage: 'N2' });
    expect(unblindContrast(coded, blinding).groups).toEqual(['patient', 'control']);
    expect(unblindContrast(coded, null).groups).toEqual(['group A', 'group B']);
    expect(() => unblindContrast(parseContrast({ design: 'groups', groups: ['group A', 'control'], stage: 'N2' }), blinding)).toThrow(
      'names one group by its code',
    );
  });
});
