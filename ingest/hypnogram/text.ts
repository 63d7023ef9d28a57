/**
 * Scoring from a plain text file: one stage label per line, line 1 = epoch 0 from the recording
 * start. Trailing blank lines are ignored; a blank line inside the file is an error (it would
 * shift every later epoch). Labels are read strictly (unknown → error unless unknownAs).
 */
import path from 'node:path';
import type { StageInterval } from './epochs.ts';
import { hypnogramFromIntervals } from './epochs.ts';
import { readScoringFile } from './table.ts';
import type { Hypnogram, ScoringOptions } from './types.ts';
import { resolveEpochS } from './types.ts';

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
  const intervals: StageInterval[] = lines.map((label, i) => ({ onsetS: i * epochS, durationS: epochS, label, where: `line ${i + 1}` }));
  return hypnogramFromIntervals(intervals, { file, source: `text:${path.basename(file)}`, eventStyle: false }, options);
}
