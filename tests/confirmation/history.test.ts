// Had data of the confirmation part been analysed before a plan was locked? (src/core/confirmation/
// history.ts) — from ledger lines and the database's confirmations; and the methods paragraph that
// states it (methods-text.ts): plan id, hash and lock time, the contrasts fixed before the
// confirmation part was analysed, and plainly when the confirmation is a repeat or the lock late.
import { describe, expect, it } from 'vitest';
import { looksBeforeLock, type LedgerLook } from '../../src/core/confirmation/history.ts';
import { partParagraph } from '../../src/core/confirmation/methods-text.ts';
import type { PlanStamp, SplitStamp } from '../../src/core/confirmation/stamp.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';

const LOCK = '2024-03-01T12:00:00.000Z';
const current = { splitId: 'new', confirmation: new Set(['s3', 's4']) };
const old: Record<string, Record<string, Set<string>>> = {
  old: { exploration: new Set(['s1', 's3']), confirmation: new Set(['s2', 's4']) },
  other: { exploration: new Set(['s1', 's2']), confirmation: new Set() },
};
const partSubjects = (id: string, part: string) => old[id]?.[part] ?? null;
/** A time in February, before the lock. */
const at = (day: number) => `2024-02-${10 + day}T00:00:00.000Z`;

describe('looks at the confirmation part before a lock', () => {
  it('counts analyses on the whole cohort, on earlier splits sharing subjects, and confirmations; nothing after the lock or on this exploration part', () => {
    const entries: LedgerLook[] = [
      { time: at(1), kind: 'compare' }, // before any split: the whole cohort
      { time: at(2), kind: 'band-check' },
      { time: at(3), kind: 'report' }, // not an analysis
      { time: at(4), kind: 'compare', part: 'exploration', splitId: 'old' }, // s3 is in the new confirmation part
      { time: at(5), kind: 'compare', part: 'exploration', splitId: 'other' }, // s1, s2: no overlap
      { time: at(6), kind: 'compare', part: 'exploration', splitId: 'gone' }, // split unknown: counted
      { time: at(7), kind: 'compare', part: 'exploration', splitId: 'new' }, // this exploration part: fine
      { time: at(8), kind: 'compare', part: 'confirmation', splitId: 'new', planId: 'p1', confirmationRun: 1 },
      { time: at(8), kind: 'compare', part: 'confirmation', splitId: 'new', planId: 'p1', confirmationRun: 1 }, // 2nd contrast of the same run
      { time: '2024-03-02T00:00:00.000Z', kind: 'compare' }, // after the lock
    ];
    const db = [
      { planId: 'p1', run: 1, time: at(8) },
      { planId: 'p0', run: 1, time: at(2) },
      { planId: 'p9', run: 1, time: '2024-03-05T00:00:00.000Z' },
    ];
    expect(looksBeforeLock(entries, LOCK, current, partSubjects, db)).toEqual({ wholeCohort: 2, earlierSplits: 2, confirmations: 2 });
    expect(looksBeforeLock([], LOCK, current, partSubjects, [])).toEqual({ wholeCohort: 0, earlierSplits: 0, confirmations: 0 });
  });
});

const split: SplitStamp = {
  id: 'a1b2c3d4e5f6',
  madeAt: '2024-02-01T09:00:00.000Z',
  seed: 7,
  fraction: 0.5,
  stratify: ['group'],
  blindColumn: 'group',
  subjects: { exploration: 18, confirmation: 18 },
};
const plan = (over: Partial<PlanStamp>): PlanStamp => ({
  id: '0123456789ab',
  hash: '0123456789ab'.padEnd(64, 'f'),
  lockedAt: LOCK,
  confirmationRun: 1,
  earlierConfirmations: [],
  contrastIndex: 1,
  contrasts: 1,
  alpha: 0.05,
  lockedContrast: parseContrast({ design: 'groups', groups: ['group A', 'group B'] }),
  exclusions: 1,
  analysedBeforeLock: { wholeCohort: 0, earlierSplits: 0, confirmations: 0 },
  ...over,
});
const ran = parseContrast({ design: 'groups', groups: ['patient', 'control'] });

describe('the methods paragraph', () => {
  it('an exploration result: exploratory, its part and split, the blinding', () => {
    const text = partParagraph({ part: 'exploration', split, blinded: true, contrast: parseContrast({ design: 'groups', groups: ['group A', 'group B'] }) })!;
    expect(text).toContain('exploration part of split a1b2c3d4e5f6');
    expect(text).toContain('18 of 36 subjects');
    expect(text).toContain('It is exploratory');
    expect(text).toContain('were blinded');
    expect(text).not.toMatch(/control|patient/);
    expect(partParagraph({ contrast: ran })).toBeNull();
  });

  it('a first confirmation: plan id, hash and lock time, fixed before the confirmation part was analysed, unblinding, the verdict at α', () => {
    const text = partParagraph({
      part: 'confirmation',
      split,
      blinded: false,
      plan: plan({}),
      contrast: ran,
      clusters: [{ sign: -1, mass: -40, size: 20, p: 0.012, fminHz: 12, fmaxHz: 15, channels: ['C3'] }],
    })!;
    expect(text).toContain('plan 0123456789ab, locked at 2024-03-01T12:00:00.000Z');
    expect(text).toContain(`SHA-256 of the plan's canonical JSON: ${plan({}).hash}`);
    expect(text).toContain('fixed the contrasts, the ingest run, the exclusions (1) and the split before this analysis of the confirmation part');
    expect(text).toContain('group A is patient and group B is control');
    expect(text).toContain('Smallest cluster p = 0.012: confirmed.');
    expect(text).toContain('records no analysis that included confirmation-part subjects before the plan was locked');
    expect(text).not.toContain('not the first');
  });

  it('says plainly when a confirmation is a repeat, when the lock came after looks at the confirmation part, and the Bonferroni level of a plan of several contrasts', () => {
    const text = partParagraph({
      part: 'confirmation',
      split,
      plan: plan({
        confirmationRun: 2,
        earlierConfirmations: ['2024-03-02T10:00:00.000Z'],
        contrasts: 2,
        contrastIndex: 2,
        alpha: 0.025,
        analysedBeforeLock: { wholeCohort: 3, earlierSplits: 0, confirmations: 1 },
      }),
      contrast: ran,
      clusters: [{ sign: 1, mass: 30, size: 10, p: 0.03, fminHz: 4, fmaxHz: 8, channels: ['Fz'] }],
    })!;
    expect(text).toContain('**This is not the first confirmation of this plan** but confirmation 2 (earlier: 2024-03-02T10:00:00.000Z)');
    expect(text).toContain(
      '**The plan was locked after data of the confirmation part had been analysed:** the ledger shows 4 analyses that included confirmation-part subjects before the plan was locked (3 on the whole cohort before the split; 1 confirmation on this confirmation part)',
    );
    expect(text).toContain('α = 0.05/2 = 0.025 (Bonferroni)');
    expect(text).toContain('Smallest cluster p = 0.03: not confirmed.');
  });
});
