/**
 * Tab- and comma-separated text → header and rows of strings.
 *
 * TSV as BIDS writes it: tab-separated, UTF-8, one header row, no quoting (BIDS specification,
 * "Tabular files"). CSV as RFC 4180: fields may be quoted with ", a quote inside is doubled, a
 * quoted field may hold commas and line breaks; ';' may stand for ',' (scoring tables from
 * decimal-comma spreadsheets, see ingest/hypnogram/table.ts), by the same quoting rules. A
 * leading UTF-8 byte-order mark and CRLF line ends are accepted; blank lines are skipped. Cells
 * are not trimmed here.
 */
import path from 'node:path';

export type Delimiter = '\t' | ',' | ';';

export interface DelimitedTable {
  delimiter: Delimiter;
  header: string[];
  /** Data rows; `line` is the 1-based line of the file where the row starts. */
  rows: { cells: string[]; line: number }[];
}

/** By extension (.tsv → tab, .csv → comma), else by the header line (a tab → tab, else comma). */
export function detectDelimiter(file: string, text: string): Delimiter {
  const ext = path.extname(file).toLowerCase();
  if (ext === '.tsv') return '\t';
  if (ext === '.csv') return ',';
  const firstLine = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0] ?? '';
  return firstLine.includes('\t') ? '\t' : ',';
}

/** Throws Error(`line N: …`) on an unterminated quoted CSV field. */
export function parseDelimited(text: string, delimiter: Delimiter): DelimitedTable {
  const src = text.replace(/^\uFEFF/, '');
  const records = delimiter === '\t' ? splitTsv(src) : splitCsv(src, delimiter);
  const nonBlank = records.filter((r) => !(r.cells.length === 1 && r.cells[0] === ''));
  const [head, ...rows] = nonBlank;
  return { delimiter, header: head ? head.cells : [], rows };
}

function splitTsv(src: string): { cells: string[]; line: number }[] {
  return src.split(/\r?\n/).map((l, i) => ({ cells: l.split('\t'), line: i + 1 }));
}

function splitCsv(src: string, separator: ',' | ';'): { cells: string[]; line: number }[] {
  const out: { cells: string[]; line: number }[] = [];
  let cells: string[] = [];
  let cell = '';
  let line = 1;
  let recordLine = 1;
  let i = 0;
  let quoted = false;
  while (i < src.length) {
    const c = src[i];
    if (quoted) {
      if (c === '"') {
        if (src[i + 1] === '"') {
          cell += '"';
          i += 2;
          continue;
        }
        quoted = false;
        i++;
        continue;
      }
      if (c === '\n') line++;
      cell += c;
      i++;
      continue;
    }
    if (c === '"' && cell === '') {
      quoted = true;
      i++;
    } else if (c === separator) {
      cells.push(cell);
      cell = '';
      i++;
    } else if (c === '\n' || c === '\r') {
      cells.push(cell);
      out.push({ cells, line: recordLine });
      cells = [];
      cell = '';
      i += c === '\r' && src[i + 1] === '\n' ? 2 : 1;
      line++;
      recordLine = line;
    } else {
      cell += c;
      i++;
    }
  }
  if (quoted) throw new Error(`line ${recordLine}: quoted field is not closed`);
  if (cell !== '' || cells.length) {
    cells.push(cell);
    out.push({ cells, line: recordLine });
  }
  return out;
}

/** BIDS / common missing-value cells: 'n/a' and empty (after trimming) → null. */
export function cellValue(cell: string | undefined): string | null {
  if (cell === undefined) return null;
  const t = cell.trim();
  return t === '' || t === 'n/a' ? null : t;
}

/** A decimal number as text (no hex, no 'Infinity', no empty string). */
export function parseNumber(text: string): number | null {
  return /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(text.trim()) ? Number(text) : null;
}
