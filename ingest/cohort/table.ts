/**
 * A cohort table (TSV or CSV), one row per recording (docs/design.md, "The cohort table"):
 * `subject`, `session` (optional), `group` (optional), `recording` (EDF path), `scoring`
 * (optional path; else the EDF+ annotations), `lights_off` and `lights_on` (optional, per
 * recording: a local clock time HH:MM or HH:MM:SS, or seconds from the recording start),
 * `positions` (optional path of the recording's electrode positions file, positions.ts), then
 * covariate columns kept typed. These column names are matched case-insensitively; covariate names are kept as written. Paths are relative
 * to the table's folder. 'n/a' and empty cells are missing.
 *
 * Every problem is collected and reported together (CohortError): unreadable file, missing
 * required columns, duplicate column names, ragged rows, empty subject or recording, duplicate
 * subject/session pairs, missing recording or scoring files, empty group cells when a group
 * column exists, and a subject given two different groups.
 *
 * With `rowProblems: 'per-recording'` (what ingest uses) the problems that concern one recording
 * only — a duplicate subject/session row (the later row), a recording or scoring file that is
 * missing or not a regular file (a folder, a FIFO) — do not stop the table: the row is kept with
 * `problem` set, so ingest can record it in ingest_errors and store the other recordings. Such
 * rows add no participant.
 */
import { readFile, stat } from 'node:fs/promises';
import path from 'node:path';
import { z } from 'zod';
import { cellValue, detectDelimiter, parseDelimited, parseNumber } from './delimited.ts';
import { columnKind, typedValue } from './typed-columns.ts';
import { ElectrodesFileError, readPositionsFile } from './positions.ts';
import type { CoordinateUnit, ElectrodeLayout } from '../../src/core/montage/electrodes-file.ts';
import type { Cohort, CohortProblem, CohortRecording, ColumnKind, LightsCell } from './types.ts';
import { CohortError } from './types.ts';

const RESERVED = ['subject', 'session', 'group', 'recording', 'scoring', 'lights_off', 'lights_on', 'positions'] as const;
const LIGHTS = ['lights_off', 'lights_on'] as const;

/** A lights cell: 'HH:MM' or 'HH:MM:SS' (24-hour local clock) or seconds (≥ 0) from the recording start; undefined when it is neither. */
function lightsCell(text: string): LightsCell | undefined {
  const m = /^(\d{1,2}):(\d\d)(?::(\d\d(?:\.\d+)?))?$/.exec(text.trim());
  if (m) {
    const [h, mi, s] = [Number(m[1]), Number(m[2]), Number(m[3] ?? 0)];
    return h < 24 && mi < 60 && s < 60 ? { clockS: h * 3600 + mi * 60 + s } : undefined;
  }
  const x = parseNumber(text);
  return x !== null && x >= 0 ? { fromStartS: x } : undefined;
}
const REQUIRED = ['subject', 'recording'] as const;
/** File checks (stat) in flight at once. */
const FILE_CHECKS_AT_ONCE = 32;

function rowSchema(hasGroup: boolean) {
  return z.object({
    subject: z.string({ error: 'subject is missing' }).min(1, { error: 'subject is empty' }),
    session: z.string().nullable(),
    group: hasGroup ? z.string({ error: 'group is empty (the table has a group column, so every row needs one)' }) : z.null(),
    recording: z.string({ error: 'recording path is empty' }).min(1, { error: 'recording path is empty' }),
    scoring: z.string().nullable(),
  });
}

export interface ReadCohortOptions {
  /** 'all-fatal' (default): every problem throws; 'per-recording': see the module comment. */
  rowProblems?: 'all-fatal' | 'per-recording';
  /** Unit of a `positions` file without a _coordsystem.json beside it (default mm). */
  positionsUnit?: CoordinateUnit;
}

/** Reads and validates a cohort table; throws CohortError listing every problem found. */
export async function readCohortTable(file: string, options: ReadCohortOptions = {}): Promise<Cohort> {
  const perRecording = options.rowProblems === 'per-recording';
  const abs = path.resolve(file);
  let text: string;
  try {
    text = await readFile(abs, 'utf8');
  } catch (e) {
    throw new CohortError(file, [
      { row: null, column: null, message: `cannot read the cohort table: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}` },
    ]);
  }
  let table;
  try {
    table = parseDelimited(text, detectDelimiter(abs, text));
  } catch (e) {
    throw new CohortError(file, [{ row: null, column: null, message: (e as Error).message }]);
  }

  const problems: CohortProblem[] = [];
  const names = table.header.map((h) => {
    const t = h.trim();
    const lower = t.toLowerCase();
    return (RESERVED as readonly string[]).includes(lower) ? lower : t;
  });
  const seen = new Set<string>();
  names.forEach((n, i) => {
    if (n === '') problems.push({ row: null, column: null, message: `header field ${i + 1} is empty` });
    else if (seen.has(n)) problems.push({ row: null, column: n, message: `column '${n}' appears twice in the header` });
    seen.add(n);
  });
  for (const req of REQUIRED) {
    if (!names.includes(req)) problems.push({ row: null, column: req, message: `required column '${req}' is missing (header: ${table.header.join(', ')})` });
  }
  if (table.rows.length === 0) problems.push({ row: null, column: null, message: 'the table has no data rows' });
  if (problems.length) throw new CohortError(file, problems);

  const col = (name: string) => names.indexOf(name);
  const hasGroup = col('group') >= 0;
  const covariateNames = names.filter((n) => !(RESERVED as readonly string[]).includes(n));
  const schema = rowSchema(hasGroup);
  const folder = path.dirname(abs);

  // Covariate kinds over all rows.
  const kinds = new Map<string, ColumnKind>();
  for (const name of covariateNames) kinds.set(name, columnKind(table.rows.map((r) => cellValue(r.cells[col(name)]))));

  const recordings: CohortRecording[] = [];
  // one read of each positions file, however many rows name it
  const positionFiles = new Map<string, Promise<ElectrodeLayout>>();
  const readPositions = async (
    abs: string,
    given: string,
    row: number,
    rec: CohortRecording,
    report: (p: CohortProblem & { column: string }) => void,
  ): Promise<void> => {
    let layout = positionFiles.get(abs);
    if (!layout) positionFiles.set(abs, (layout = readPositionsFile(abs, given, options.positionsUnit ?? 'mm')));
    try {
      rec.positions = await layout;
    } catch (e) {
      if (!(e instanceof ElectrodesFileError)) throw e;
      report({ row, column: 'positions', message: e.message });
    }
  };
  const pairRow = new Map<string, number>();
  const fileChecks: (() => Promise<void>)[] = [];
  const at = (cells: string[], name: string) => (col(name) >= 0 ? cellValue(cells[col(name)]) : null);

  table.rows.forEach((r, i) => {
    const row = i + 1;
    if (r.cells.length !== names.length) {
      problems.push({ row, column: null, message: `has ${r.cells.length} fields, the header has ${names.length} (line ${r.line})` });
      return;
    }
    const parsed = schema.safeParse({
      subject: at(r.cells, 'subject') ?? '',
      session: at(r.cells, 'session'),
      group: at(r.cells, 'group'),
      recording: at(r.cells, 'recording') ?? '',
      scoring: at(r.cells, 'scoring'),
    });
    if (!parsed.success) {
      for (const issue of parsed.error.issues) problems.push({ row, column: String(issue.path[0] ?? ''), message: issue.message });
      return;
    }
    const v = parsed.data;
    const recordingPath = path.resolve(folder, v.recording);
    const scoringPath = v.scoring === null ? null : path.resolve(folder, v.scoring);
    const covariates: Record<string, number | string | null> = {};
    for (const name of covariateNames) covariates[name] = typedValue(at(r.cells, name), kinds.get(name)!);
    const rec: CohortRecording = {
      row,
      subject: v.subject,
      session: v.session,
      group: hasGroup ? v.group : null,
      recordingPath,
      recordingAsGiven: v.recording,
      scoringPath,
      covariates,
    };
    recordings.push(rec);
    // a problem of this row alone: fatal, or kept on the row for ingest to record
    const rowProblem = (p: CohortProblem & { column: string }) => {
      if (!perRecording) problems.push(p);
      else rec.problem ??= { column: p.column, message: `cohort table row ${p.row}, column '${p.column}': ${p.message}` };
    };
    if (LIGHTS.some((n) => col(n) >= 0)) {
      const [off, on] = LIGHTS.map((n) => {
        const text = at(r.cells, n);
        const cell = text === null ? null : lightsCell(text);
        if (cell === undefined)
          rowProblem({ row, column: n, message: `'${text}' is neither a clock time (HH:MM or HH:MM:SS, 24-hour) nor seconds (≥ 0) from the recording start` });
        return cell ?? null;
      });
      rec.lights = { off, on };
    }

    const key = `${v.subject}\u0000${v.session ?? ''}`;
    const first = pairRow.get(key);
    if (first !== undefined) {
      rowProblem({
        row,
        column: 'subject',
        message: `subject '${v.subject}'${v.session === null ? ' (no session)' : ` session '${v.session}'`} is already in row ${first}`,
      });
    } else pairRow.set(key, row);

    fileChecks.push(() => checkFile(recordingPath, v.recording, row, 'recording', rowProblem));
    if (scoringPath !== null && v.scoring !== null) fileChecks.push(() => checkFile(scoringPath, v.scoring!, row, 'scoring', rowProblem));
    const positionsCell = at(r.cells, 'positions');
    if (positionsCell !== null) fileChecks.push(() => readPositions(path.resolve(folder, positionsCell), positionsCell, row, rec, rowProblem));
  });
  // a few checks at a time: a stat that fails holds an error with its stack, and a table of
  // 100,000 missing files must not hold 100,000 of them at once
  let nextCheck = 0;
  await Promise.all(
    Array.from({ length: Math.min(FILE_CHECKS_AT_ONCE, fileChecks.length) }, async () => {
      while (nextCheck < fileChecks.length) await fileChecks[nextCheck++]();
    }),
  );
  fileChecks.length = 0; // each check holds its row's scope
  positionFiles.clear();

  const participants = participantsOf(
    recordings.filter((r) => !r.problem),
    hasGroup,
    covariateNames,
    problems,
  );
  if (problems.length) {
    problems.sort((a, b) => (a.row ?? 0) - (b.row ?? 0));
    throw new CohortError(file, problems);
  }
  const columns = [
    { name: 'subject', kind: 'string' as const },
    ...(hasGroup ? [{ name: 'group', kind: 'string' as const }] : []),
    ...covariateNames.map((name) => ({ name, kind: kinds.get(name)! })),
  ];
  return { source: 'table', root: folder, recordings, columns, participants };
}

async function checkFile(abs: string, given: string, row: number, column: string, report: (p: CohortProblem & { column: string }) => void): Promise<void> {
  try {
    const s = await stat(abs);
    // a folder or a FIFO in place of the file: never opened (reading a FIFO would block)
    if (!s.isFile())
      report({
        row,
        column,
        message: `'${given}' is not a file but a ${s.isDirectory() ? 'folder' : s.isFIFO() ? 'FIFO (named pipe)' : 'special file'} (${abs})`,
      });
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    report({
      row,
      column,
      message:
        code === 'ENOENT' || code === undefined
          ? `${column} file not found: '${given}' (${abs})`
          : `${column} file cannot be examined (${code}): '${given}' (${abs})`,
    });
  }
}

/**
 * One participant per subject, from the subject's first row. A subject in two groups is a
 * problem; covariates may differ between a subject's sessions (each recording keeps its own).
 */
function participantsOf(recordings: CohortRecording[], hasGroup: boolean, covariateNames: string[], problems: CohortProblem[]) {
  const bySubject = new Map<string, { row: number; record: Record<string, number | string | null> }>();
  for (const r of recordings) {
    const known = bySubject.get(r.subject);
    if (known) {
      if (hasGroup && known.record.group !== r.group) {
        problems.push({
          row: r.row,
          column: 'group',
          message: `subject '${r.subject}' is in group '${r.group}' here but in group '${known.record.group}' in row ${known.row}`,
        });
      }
      continue;
    }
    const record: Record<string, number | string | null> = { subject: r.subject };
    if (hasGroup) record.group = r.group;
    for (const name of covariateNames) record[name] = r.covariates[name];
    bySubject.set(r.subject, { row: r.row, record });
  }
  return [...bySubject.values()].map((v) => v.record);
}
