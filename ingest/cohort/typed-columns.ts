/**
 * Column typing of a participants/cohort table: a column whose non-missing values all parse as
 * decimal numbers (and which has at least one value) is numeric; any other is text.
 * Missing values ('n/a', empty) are null either way.
 */
import { parseNumber } from './delimited.ts';
import type { ColumnKind } from './types.ts';

export function columnKind(values: readonly (string | null)[]): ColumnKind {
  let any = false;
  for (const v of values) {
    if (v === null) continue;
    if (parseNumber(v) === null) return 'string';
    any = true;
  }
  return any ? 'number' : 'string';
}

export function typedValue(value: string | null, kind: ColumnKind): number | string | null {
  if (value === null) return null;
  return kind === 'number' ? (parseNumber(value) as number) : value;
}
