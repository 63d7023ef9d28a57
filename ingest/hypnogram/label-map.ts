/**
 * A stage-label map file (our format, README "Formats"): a TSV (tab-separated, UTF-8, one header
 * row) with the columns `label` and `stage`, header names matched case-insensitively, other
 * columns ignored. `stage` is W, N1, N2, N3, R or unscored (any case). Labels are matched as the
 * built-in ones are (ignoring case and white space) and take precedence over them; two rows whose
 * labels match must give the same stage. Every problem is reported together, with its line.
 * Read when the ingest options are parsed (synchronously); the map itself goes into the run's
 * parameters, so a changed map makes a new run.
 */
import { readFileSync } from 'node:fs';
import { normalizeLabel, type LabelMap } from '../../src/core/hypnogram/labels.ts';
import { ALL_STAGES, type Stage } from '../../src/core/stages.ts';
import { cellValue, parseDelimited } from '../cohort/delimited.ts';
import { ScoringError, type ScoringProblem } from './types.ts';

export function readLabelMap(file: string): LabelMap {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new ScoringError(file, [
      { kind: 'label-map', epochs: [], message: `cannot read the label map: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}` },
    ]);
  }
  const table = parseDelimited(text, '\t');
  const lower = table.header.map((h) => h.trim().toLowerCase());
  const problems: ScoringProblem[] = [];
  const problem = (message: string) => problems.push({ kind: 'label-map', epochs: [], message });
  for (const name of ['label', 'stage']) if (!lower.includes(name)) problem(`label map: no '${name}' column (header: ${table.header.join(', ')})`);
  if (problems.length) throw new ScoringError(file, problems);

  const labelCol = lower.indexOf('label');
  const stageCol = lower.indexOf('stage');
  const byName = new Map(ALL_STAGES.map((s) => [s.toLowerCase(), s]));
  const map: LabelMap = {};
  const seen = new Map<string, { label: string; stage: Stage; line: number }>();
  for (const { cells, line } of table.rows) {
    if (cells.length !== table.header.length) {
      problem(`label map line ${line} has ${cells.length} fields, the header has ${table.header.length}`);
      continue;
    }
    const label = cellValue(cells[labelCol]);
    const stageText = cells[stageCol].trim();
    const stage = byName.get(stageText.toLowerCase());
    if (label === null) {
      problem(`label map line ${line}: empty label`);
      continue;
    }
    if (stage === undefined) {
      problem(`label map line ${line}: stage '${stageText}' is not one of ${ALL_STAGES.join(', ')}`);
      continue;
    }
    const key = normalizeLabel(label);
    const first = seen.get(key);
    if (first && first.stage !== stage) {
      problem(`label map line ${line}: '${label}' is the same label as '${first.label}' (line ${first.line}), which maps to ${first.stage}, not ${stage}`);
      continue;
    }
    if (!first) seen.set(key, { label, stage, line });
    map[label] = stage;
  }
  if (problems.length) throw new ScoringError(file, problems);
  return map;
}
