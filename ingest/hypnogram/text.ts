/**
 * Scoring from a plain text file: one stage label per line, line 1 = epoch 0 from the recording
 * start. A UTF-8 byte-order mark, CRLF line ends and trailing blank lines are ignored; a blank
 * line inside the file is an error (it would shift every later epoch). A first line that names
 * the column (Stage, Stages, Sleep stage, Hypnogram; any case) and is no stage label is a header
 * and skipped (common practice of lab exports); any other first line is epoch 0. Labels are read
 * strictly (unknown → error unless unknownAs).
 */
import path from 'node:path';
import type { StageInterval } from './epochs.ts';
import { hypnogramFromIntervals } from './epochs.ts';
import { readScoringFile } from './table.ts';
import type { Hypnogram, ScoringOptions } from './types.ts';
import { resolveEpochS } from './types.ts';
import { normalizeLabel, stageFromLabel } from '../../src/core/hypnogram/labels.ts';

const HEADER_LINE = /^((sleep)?[-_]?stages?|hypnogram)$/;

export async function readScoringText(file: string, options: ScoringOptions = {}): Promise<Hypnogram> {
  return scoringFromText(await readScoringFile(file), file, options);
}

export function scoringFromText(text: string, file: string, options: ScoringOptions = {}): Hypnogram {
  const epochS = resolveEpochS(options, file);
  const lines = text
    .replace(/^\uFEFF/, '')
    .split(/\r?\n/)
    .map((l) => l.trim());
  while (lines.length && lines[lines.length - 1] === '') lines.pop();
  const header = lines.length > 0 && stageFromLabel(lines[0], options.labelMap) === undefined && HEADER_LINE.test(normalizeLabel(lines[0])) ? 1 : 0;
  const intervals: StageInterval[] = lines.slice(header).map((label, i) => ({ onsetS: i * epochS, durationS: epochS, label, where: `line ${i + 1 + header}` }));
  return hypnogramFromIntervals(intervals, { file, source: `text:${path.basename(file)}`, eventStyle: false }, options);
}
