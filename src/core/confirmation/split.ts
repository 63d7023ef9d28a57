/**
 * The split of a cohort's subjects into an exploration part and a confirmation part: a seeded
 * draw, stratified by participants columns, so each stratum enters the exploration part in the
 * split's proportion (within one subject). Holding out a confirmation sample is common practice
 * in confirmatory research; there is no standard format for it (STANDARDS.md, Statistics).
 */
import { Random } from '../stats/random.ts';
import { deriveSeed } from '../simulate/seeds.ts';

export const PARTS = ['exploration', 'confirmation'] as const;
export type Part = (typeof PARTS)[number];

export interface SplitSettings {
  /** share of each stratum that goes into the exploration part, 0 < fraction < 1 */
  fraction: number;
  /** seed of the draw (a whole number) */
  seed: number;
  /** participants columns the split is stratified by (none: the cohort is one stratum) */
  stratify: string[];
}

/** One subject with its stratum: the values of the stratifying columns, as one key. */
export interface SplitSubject {
  subject: string;
  stratum: string;
}

export class SplitError extends Error {
  override name = 'SplitError';
}

/** Random streams drawn from a split's seed: one for the draw, one for the group codes of blinding. */
export const SPLIT_STREAM = { draw: 0x5011, codes: 0xc0de } as const;

/** The stratum key of a participants row: the stratifying columns' values (a missing value is its own stratum). */
export function stratumOf(row: Readonly<Record<string, unknown>>, columns: readonly string[]): string {
  return JSON.stringify(columns.map((c) => (row[c] === undefined || row[c] === null ? null : String(row[c]))));
}

export function checkSplitSettings(s: SplitSettings): void {
  if (!(Number.isFinite(s.fraction) && s.fraction > 0 && s.fraction < 1))
    throw new SplitError(`invalid fraction: ${s.fraction} (the exploration part's share, between 0 and 1, e.g. 0.5)`);
  if (!Number.isSafeInteger(s.seed)) throw new SplitError(`invalid seed: ${s.seed} (a whole number)`);
}

/**
 * Draws the split. Per stratum of n subjects the exploration part takes ⌊F·n⌋ or ⌈F·n⌉ of them;
 * the strata that take the extra one are those with the largest remainders F·n − ⌊F·n⌋ (ties in
 * an order drawn from the seed) until the whole exploration part holds round(F·N) subjects
 * (largest-remainder allocation, common practice). Within a stratum, the subjects (sorted) are
 * shuffled with the seed's draw stream (Fisher–Yates) and the first ones explore. The same
 * subjects, strata and settings always give the same split.
 */
export function drawSplit(subjects: readonly SplitSubject[], settings: SplitSettings): Map<string, Part> {
  checkSplitSettings(settings);
  const strata = new Map<string, string[]>();
  for (const s of subjects) {
    if (s.subject === '') throw new SplitError('a subject has an empty label');
    const list = strata.get(s.stratum) ?? [];
    list.push(s.subject);
    strata.set(s.stratum, list);
  }
  const total = subjects.length;
  if (new Set(subjects.map((s) => s.subject)).size !== total) throw new SplitError('a subject is listed twice');
  const rng = new Random(deriveSeed(settings.seed, SPLIT_STREAM.draw));
  const keys = [...strata.keys()].sort();
  const F = settings.fraction;
  const take = new Map(keys.map((k) => [k, Math.floor(F * strata.get(k)!.length)]));
  // remainders, largest first; ties in a random order (shuffle, then a stable sort)
  const remainders = rng.shuffle(keys.map((k) => ({ k, r: F * strata.get(k)!.length - take.get(k)! })));
  remainders.sort((a, b) => b.r - a.r);
  let extra = Math.round(F * total) - [...take.values()].reduce((a, b) => a + b, 0);
  for (const { k, r } of remainders) {
    if (extra <= 0 || r <= 0) break;
    take.set(k, take.get(k)! + 1);
    extra--;
  }
  const out = new Map<string, Part>();
  for (const k of keys) {
    const list = rng.shuffle([...strata.get(k)!].sort());
    list.forEach((subject, i) => out.set(subject, i < take.get(k)! ? 'exploration' : 'confirmation'));
  }
  const explore = [...out.values()].filter((p) => p === 'exploration').length;
  if (explore === 0 || explore === total) {
    throw new SplitError(
      `with fraction ${F}, ${total} subject${total === 1 ? '' : 's'} leave the ${explore === 0 ? 'exploration' : 'confirmation'} part empty`,
    );
  }
  return out;
}
