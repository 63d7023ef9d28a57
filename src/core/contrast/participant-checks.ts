/**
 * Checks of the participants' columns a contrast names, and of who is left, each failing with one
 * plain sentence (ContrastDataError) that says what exists instead: the values a group column
 * holds, the numeric columns, the subjects left out and why. Pure.
 */
import type { Contrast } from './spec.ts';
import type { Exclusion } from './data.ts';
import { ContrastDataError } from './data-error.ts';

type Participants = readonly Record<string, string | number | null>[];

/** Subjects named in a message at most; the rest are counted. */
const NAMED = 20;

/** Columns whose every value present is a number (and at least one is present), sorted. */
function numericColumns(participants: Participants): string[] {
  const names = new Set(participants.flatMap((p) => Object.keys(p)));
  names.delete('subject');
  return [...names]
    .filter(
      (n) => participants.some((p) => typeof p[n] === 'number') && participants.every((p) => p[n] === null || p[n] === undefined || typeof p[n] === 'number'),
    )
    .sort();
}

function requireColumn(participants: Participants, name: string, role: string): void {
  if (participants.some((p) => name in p)) return;
  const columns = [...new Set(participants.flatMap((p) => Object.keys(p)))].filter((n) => n !== 'subject');
  throw new ContrastDataError(`${role} ${name} is not a participants column; columns: ${columns.join(', ') || 'none'}`);
}

function requireNumeric(participants: Participants, name: string, role: string): void {
  requireColumn(participants, name, role);
  if (participants.some((p) => typeof p[name] === 'string')) {
    throw new ContrastDataError(`${role} ${name} holds text (not numbers); numeric columns: ${numericColumns(participants).join(', ') || 'none'}`);
  }
}

/** The group column holds both groups; the covariate is a numeric column; the nuisance covariates are columns. */
export function checkColumns(c: Contrast, participants: Participants): void {
  if (c.design === 'groups') {
    requireColumn(participants, c.groupColumn, 'group column');
    const values = [
      ...new Set(
        participants
          .map((p) => p[c.groupColumn])
          .filter((v) => v !== null && v !== undefined)
          .map(String),
      ),
    ].sort();
    for (const g of c.groups ?? []) {
      if (!values.includes(g)) throw new ContrastDataError(`no subject has ${c.groupColumn} '${g}'; its values are: ${values.join(', ') || 'none'}`);
    }
  }
  if (c.design === 'covariate' && c.covariate) requireNumeric(participants, c.covariate, 'covariate');
  // a nuisance covariate may be numeric or categorical (text levels, dummy-coded: nuisance-coding.ts)
  if (c.design !== 'paired') for (const name of c.nuisance) requireColumn(participants, name, 'nuisance covariate');
}

/** Enough subjects left (2 per group; 3 for a covariate or paired design), or who was left out and why. */
export function checkEnoughSubjects(c: Contrast, kept: readonly { group: string | null }[], excluded: readonly Exclusion[]): void {
  let shortfall: string | null = null;
  if (c.design === 'groups') {
    const counts = (c.groups ?? []).map((g) => [g, kept.filter((k) => k.group === g).length] as const);
    if (counts.some(([, n]) => n < 2)) shortfall = `${counts.map(([g, n]) => `${g} ${n}`).join(', ')} (each group needs at least 2)`;
  } else if (kept.length < 3) shortfall = `${kept.length} (at least 3 are needed)`;
  if (shortfall === null) return;
  const named = excluded.slice(0, NAMED).map((e) => `${e.subject} (${e.reason})`);
  if (excluded.length > NAMED) named.push(`and ${excluded.length - NAMED} more`);
  throw new ContrastDataError(`too few subjects: ${shortfall}; left out: ${named.join(', ') || 'none'}`);
}
