/**
 * Scoring from a TSV/CSV table with onset (s), duration (s) and stage columns.
 *
 * Header names are matched case-insensitively. The stage column is `stage`; without one,
 * `trial_type` and then `description` are used (BIDS _events.tsv style). A `stage` column is
 * read strictly: every non-missing cell must be a stage label, and rows whose stage is n/a are
 * other events (listed in an 'ignored-events' warning). A `trial_type`/`description` column may
 * mix stages with other events: texts that are not stage labels (and do not look like one) are
 * ignored with a warning. A missing (n/a) duration means one epoch. Delimiter: by extension
 * (.tsv/.csv), else by the header line; CSV fields may be quoted.
 * Per-epoch tables (common practice of lab exports): without onset and duration columns, a
 * `stage` (or `sleep stage`) column gives one epoch per row from the recording start, read
 * strictly (n/a or empty: an epoch without scoring); an `epoch` column, if any, must count on by one from its first row (0 or 1), since a
 * skipped or repeated number would move every later epoch.
 */
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { cellValue, detectDelimiter, parseDelimited, parseNumber, type Delimiter } from '../cohort/delimited.ts';
import type { StageInterval } from './epochs.ts';
import { hypnogramFromIntervals } from './epochs.ts';
import type { Hypnogram, ScoringOptions, ScoringProblem } from './types.ts';
import { ScoringError, describeEpochs, resolveEpochS } from './types.ts';

export const STAGE_COLUMNS = ['stage', 'trial_type', 'description'] as const;

export async function readScoringTable(file: string, options: ScoringOptions = {}): Promise<Hypnogram> {
  const text = await readScoringFile(file);
  return scoringFromTableText(text, file, options);
}

/** The same as readScoringTable, from text already in memory (`file` names it in messages). */
export function scoringFromTableText(text: string, file: string, options: ScoringOptions = {}): Hypnogram {
  const epochS = resolveEpochS(options, file);
  let table;
  try {
    table = parseDelimited(text, scoringDelimiter(file, text));
  } catch (e) {
    throw new ScoringError(file, [{ kind: 'syntax', epochs: [], message: (e as Error).message }]);
  }
  const lower = table.header.map((h) => h.trim().toLowerCase());
  const onsetCol = lower.indexOf('onset');
  const durCol = lower.indexOf('duration');
  const stageName = STAGE_COLUMNS.find((c) => lower.includes(c));
  const perEpochCol = lower.findIndex((h) => /^sleep[ _]?stage$|^stage$/.test(h));
  if (onsetCol < 0 && durCol < 0 && perEpochCol >= 0) return perEpochTable(table, lower, perEpochCol, file, epochS, options);
  const problems: ScoringProblem[] = [];
  if (onsetCol < 0) problems.push({ kind: 'column', epochs: [], message: `no 'onset' column (header: ${table.header.join(', ')})` });
  if (durCol < 0) problems.push({ kind: 'column', epochs: [], message: `no 'duration' column (header: ${table.header.join(', ')})` });
  if (!stageName)
    problems.push({ kind: 'column', epochs: [], message: `no stage column: expected one of ${STAGE_COLUMNS.join(', ')} (header: ${table.header.join(', ')})` });
  if (problems.length || !stageName) throw new ScoringError(file, problems);
  const stageCol = lower.indexOf(stageName);

  const intervals: StageInterval[] = [];
  const noStage: number[] = [];
  table.rows.forEach((r, i) => {
    const where = `row ${i + 1}`;
    if (r.cells.length !== table.header.length) {
      problems.push({ kind: 'syntax', epochs: [], message: `${where} (line ${r.line}) has ${r.cells.length} fields, the header has ${table.header.length}` });
      return;
    }
    const onsetText = cellValue(r.cells[onsetCol]);
    const onsetS = onsetText === null ? null : parseNumber(onsetText);
    if (onsetS === null) {
      problems.push({
        kind: 'onset',
        epochs: [],
        message: `${where}, column '${table.header[onsetCol]}': onset '${r.cells[onsetCol]}' is not a number of seconds`,
      });
      return;
    }
    const durText = cellValue(r.cells[durCol]);
    const durationS = durText === null ? null : parseNumber(durText);
    if (durText !== null && durationS === null) {
      problems.push({ kind: 'duration', epochs: [], message: `${where}, column '${table.header[durCol]}': duration '${durText}' is not a number of seconds` });
      return;
    }
    const label = cellValue(r.cells[stageCol]);
    if (label === null) {
      noStage.push(Math.floor(onsetS / epochS + 1e-9));
      return;
    }
    intervals.push({ onsetS, durationS, label, where });
  });
  if (problems.length) throw new ScoringError(file, problems);

  const hyp = hypnogramFromIntervals(intervals, { file, source: `table:${path.basename(file)}`, eventStyle: stageName !== 'stage' }, options);
  if (noStage.length) {
    hyp.warnings.push({
      kind: 'ignored-events',
      epochs: noStage,
      message: `${noStage.length} row(s) with no stage (n/a) ignored at ${describeEpochs(noStage, epochS)}`,
    });
  }
  return hyp;
}

/** One row per epoch from the recording start: the stage column strictly, an epoch column checked to count on by one. */
function perEpochTable(
  table: ReturnType<typeof parseDelimited>,
  lower: string[],
  stageCol: number,
  file: string,
  epochS: number,
  options: ScoringOptions,
): Hypnogram {
  const epochCol = lower.indexOf('epoch');
  const problems: ScoringProblem[] = [];
  const intervals: StageInterval[] = [];
  let first: number | null = null;
  table.rows.forEach((r, i) => {
    const where = `row ${i + 1}`;
    if (r.cells.length !== table.header.length) {
      problems.push({ kind: 'syntax', epochs: [], message: `${where} (line ${r.line}) has ${r.cells.length} fields, the header has ${table.header.length}` });
      return;
    }
    if (epochCol >= 0) {
      const n = parseNumber(cellValue(r.cells[epochCol]) ?? '');
      first ??= n === 0 ? 0 : 1;
      if (n !== first + i) {
        problems.push({
          kind: 'onset',
          epochs: [i],
          message: `${where}, column '${table.header[epochCol]}': epoch ${n === null ? '(not a number)' : n} is not the next epoch (${first + i})`,
        });
        return;
      }
    }
    const label = cellValue(r.cells[stageCol]);
    if (label !== null) intervals.push({ onsetS: i * epochS, durationS: epochS, label, where }); // n/a: an epoch without scoring
  });
  if (problems.length) throw new ScoringError(file, problems);
  return hypnogramFromIntervals(intervals, { file, source: `table:${path.basename(file)}`, eventStyle: false }, options);
}

/**
 * detectDelimiter, and ';' when a comma-separated guess meets a header line with semicolons and
 * no comma (decimal-comma spreadsheets write CSV so; common practice). A decimal comma in an onset
 * is then no number and is refused naming its row, never misread.
 */
export function scoringDelimiter(file: string, text: string): Delimiter {
  const d = detectDelimiter(file, text);
  const firstLine = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0] ?? '';
  return d === ',' && firstLine.includes(';') && !firstLine.includes(',') ? ';' : d;
}

export async function readScoringFile(file: string): Promise<string> {
  try {
    return await readFile(file, 'utf8');
  } catch (e) {
    throw new ScoringError(file, [
      { kind: 'file', epochs: [], message: `cannot read the scoring file: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}` },
    ]);
  }
}
