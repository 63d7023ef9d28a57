/**
 * One entry point for a scoring file, chosen by extension: .edf/.bdf → EDF+/BDF+ annotations,
 * .tsv/.csv → table, .txt → one label per epoch; any other name is a table when its first line
 * names an 'onset' column, else a per-epoch text file.
 */
import path from 'node:path';
import { parseDelimited } from '../cohort/delimited.ts';
import { readScoringEdf } from './edf.ts';
import type { EdfScoringOptions } from './edf.ts';
import { readScoringFile, scoringDelimiter, scoringFromTableText } from './table.ts';
import { scoringFromText } from './text.ts';
import type { Hypnogram } from './types.ts';

export async function readScoring(file: string, options: EdfScoringOptions = {}): Promise<Hypnogram> {
  const ext = path.extname(file).toLowerCase();
  if (ext === '.edf' || ext === '.bdf') return readScoringEdf(file, options);
  const text = await readScoringFile(file);
  if (ext === '.tsv' || ext === '.csv') return scoringFromTableText(text, file, options);
  if (ext === '.txt') return scoringFromText(text, file, options);
  const firstLine = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0] ?? '';
  let header: string[] = [];
  try {
    header = parseDelimited(firstLine, scoringDelimiter(file, text)).header;
  } catch {
    // an unclosed quote: not a table header
  }
  const isTable = header.some((h) => h.trim().toLowerCase() === 'onset');
  return isTable ? scoringFromTableText(text, file, options) : scoringFromText(text, file, options);
}
