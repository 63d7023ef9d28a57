// Column descriptions for DataTable, and how a cell is shown.
import type { Cell, Row } from '../db/arrow-rows.ts';

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
