// Column descriptions for DataTable, and how a cell is shown.
import type { Cell, Row } from '../../queries/client.ts';

export interface DataColumn {
  /** Key in the row, also the TSV header. */
  key: string;
  /** Header shown on screen (units in brackets). */
  label: string;
  /** Decimals for numbers; absent: shown as stored. */
  digits?: number;
}

export function formatCell(v: Cell | undefined, digits?: number): string {
  if (v === null || v === undefined) return '–';
  if (typeof v === 'number') return digits === undefined ? String(v) : v.toFixed(digits);
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  return v;
}

/** Columns that hold numbers in every non-missing cell are right-aligned. */
export function isNumericColumn(rows: readonly Row[], key: string): boolean {
  let seen = false;
  for (const r of rows) {
    const v = r[key];
    if (v === null || v === undefined) continue;
    if (typeof v !== 'number') return false;
    seen = true;
  }
  return seen;
}

/** Rows ordered by one column: numbers numerically, text by locale, missing values last. */
export function sortRows(rows: readonly Row[], key: string, descending: boolean): Row[] {
  const sign = descending ? -1 : 1;
  return [...rows].sort((a, b) => {
    const x = a[key];
    const y = b[key];
    if (x === null || x === undefined) return y === null || y === undefined ? 0 : 1;
    if (y === null || y === undefined) return -1;
    if (typeof x === 'number' && typeof y === 'number') return sign * (x - y);
    return sign * String(x).localeCompare(String(y), undefined, { numeric: true });
  });
}
