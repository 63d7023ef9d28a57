/**
 * Blinding of a groups design while the analysis is explored: the values of one participants
 * column (the groups) are replaced by codes ("group A", "group B", …), assigned in an order drawn
 * from the split's seed, so a pipeline can be tuned without knowing which way a difference goes.
 * The code of each value is stored with the split; no screen or output shows it while blinded.
 */
import type { Contrast } from '../contrast/spec.ts';
import { ContrastDataError } from '../contrast/assemble.ts';
import { Random } from '../stats/random.ts';
import { deriveSeed } from '../simulate/seeds.ts';
import { SPLIT_STREAM } from './split.ts';

export interface Blinding {
  /** the participants column whose values are coded */
  column: string;
  /** real value → code */
  codes: Readonly<Record<string, string>>;
}

/** A contrast or participants table the blinding cannot serve (a ContrastDataError: the commands print it as one line). */
export class BlindingError extends ContrastDataError {
  override name = 'BlindingError';
}

const LETTERS = 'ABCDEFGHIJKLMNOPQRSTUVWXYZ';

/** The codes a column with `count` values gets, in code order: group A, group B, … */
export function codeNames(count: number): string[] {
  if (count > LETTERS.length) throw new BlindingError(`the blinded column has ${count} values; at most ${LETTERS.length} can be coded`);
  return Array.from({ length: count }, (_, i) => `group ${LETTERS[i]}`);
}

/** Codes for the column's distinct values: value i (sorted) gets code π(i), π a permutation drawn from the seed. */
export function drawGroupCodes(values: readonly string[], seed: number): Record<string, string> {
  const distinct = [...new Set(values)].sort();
  if (distinct.length < 2) throw new BlindingError(`blinding needs at least two groups; the column holds ${distinct.length === 0 ? 'no value' : 'one value'}`);
  const codes = new Random(deriveSeed(seed, SPLIT_STREAM.codes)).shuffle(codeNames(distinct.length));
  return Object.fromEntries(distinct.map((v, i) => [v, codes[i]]));
}

/** The code of a value (null stays null); a value the split did not see is refused. */
export function codeOf(b: Blinding, value: string | number | null): string | null {
  if (value === null) return null;
  const code = b.codes[String(value)];
  if (code === undefined)
    throw new BlindingError(`the participants column "${b.column}" holds a value the blinded split did not code; make a new split (bandwise split --replace)`);
  return code;
}

/** Participants rows with the blinded column's values replaced by their codes. */
export function blindRows<R extends Record<string, string | number | boolean | null>>(rows: readonly R[], b: Blinding): R[] {
  return rows.map((r) => (b.column in r ? { ...r, [b.column]: codeOf(b, r[b.column] as string | number | null) } : r));
}

/** Whether a contrast compares groups of the blinded column. */
export function comparesBlindedGroups(c: Contrast, b: Blinding | null): boolean {
  return b !== null && c.design === 'groups' && c.groupColumn === b.column;
}

const isCode = (b: Blinding, name: string) => Object.values(b.codes).includes(name);

/** A contrast on the blinded groups must name them by their codes while blinded. */
export function requireCodedGroups(c: Contrast, b: Blinding | null): void {
  if (!comparesBlindedGroups(c, b)) return;
  if (!c.groups!.every((g) => isCode(b!, g))) {
    throw new BlindingError(
      `the groups of "${b!.column}" are blinded while exploring: name them by their codes (${Object.values(b!.codes).sort().join(', ')})`,
    );
  }
}

/**
 * The contrast with coded group names replaced by the real ones (a plan locked while blinded,
 * run unblinded on the confirmation part); real names stay as they are. Both names must be of one kind.
 */
export function unblindContrast(c: Contrast, b: Blinding | null): Contrast {
  if (!comparesBlindedGroups(c, b)) return c;
  const coded = c.groups!.map((g) => isCode(b!, g));
  if (coded[0] !== coded[1]) throw new BlindingError('a contrast names one group by its code and the other by its value; name both the same way');
  if (!coded[0]) return c;
  const real = (code: string) => Object.entries(b!.codes).find(([, v]) => v === code)![0];
  return { ...c, groups: [real(c.groups![0]), real(c.groups![1])] };
}

/**
 * Whether the subject labels tell the blinded groups apart: within each group every label starts
 * with the same two or more characters, and no label of another group does (ctl01 … / pat01 …).
 */
export function labelsTellGroups(rows: readonly { subject: string; group: string | null }[]): boolean {
  const byGroup = new Map<string, string[]>();
  for (const r of rows) if (r.group !== null) byGroup.set(r.group, [...(byGroup.get(r.group) ?? []), r.subject]);
  if (byGroup.size < 2) return false;
  const prefix = (labels: string[]) =>
    labels.reduce((p, l) => {
      let i = 0;
      while (i < p.length && i < l.length && p[i] === l[i]) i++;
      return p.slice(0, i);
    });
  return [...byGroup].every(([g, labels]) => {
    const p = prefix(labels);
    return p.length >= 2 && [...byGroup].every(([h, others]) => h === g || others.every((l) => !l.startsWith(p)));
  });
}
