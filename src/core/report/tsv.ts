// Tables as tab-separated values (IANA text/tab-separated-values: one header line, fields
// separated by TAB; fields may not contain TAB or line breaks, so those become spaces). One
// writer for the dashboard's exports and the command line's tables.

export type TsvCell = string | number | boolean | null;

export interface TsvColumn {
  key: string;
}

function field(v: TsvCell | undefined): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : v > 0 ? 'Inf' : v < 0 ? '-Inf' : 'NaN';
  return String(v).replace(/[\t\r\n]+/g, ' ');
}

/** Header of column keys, then one line per row; numbers as given (full precision), missing as empty. */
export function toTsv(columns: readonly TsvColumn[], rows: readonly Record<string, TsvCell>[]): string {
  const lines = [columns.map((c) => field(c.key)).join('\t')];
  for (const row of rows) lines.push(columns.map((c) => field(row[c.key])).join('\t'));
  return lines.join('\n') + '\n';
}
