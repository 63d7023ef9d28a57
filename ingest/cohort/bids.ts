/**
 * A BIDS EEG folder → Cohort (BIDS specification, EEG modality; facts in shared/STANDARDS.md):
 *   participants.tsv                       participant_id 'sub-<label>' → subject '<label>';
 *                                          a `group` column if present; other columns covariates
 *   sub-<label>/[ses-<label>/]eeg/
 *     sub-<label>[_ses-<label>]_task-<label>[_acq-<label>][_run-<index>]_eeg.edf   one recording each
 *                                          (or _eeg.bdf: BDF/BDF+, read by the same reader)
 *     …_channels.tsv   name, type, units (required, in that order), status (optional)
 *     …_eeg.json       SamplingFrequency, EEGReference, PowerLineFrequency (50, 60 or "n/a")
 *     …_events.tsv     the scoring, in our convention below
 *     sub-<label>[_ses-<label>][_acq-…][_run-…][_space-…]_electrodes.tsv and its _coordsystem.json:
 *                      electrode positions (positions.ts: which file goes with which recording)
 * Sidecars are looked up beside the recording with the same entities (the inheritance of
 * sidecars from higher folders is not followed).
 *
 * Scoring convention for _events.tsv (BIDS has no sleep-stage column; this is ours):
 *   rows with `onset` and `duration` in seconds (BIDS required columns) and either a `stage`
 *   column holding the stage label (W, N1, N2, N3, R, or the older labels; n/a on rows that are
 *   other events), or, without a `stage` column, the stage label in `trial_type` — then rows
 *   whose trial_type is not a stage label are other events. Onsets on the 30-s epoch grid from
 *   the recording start. Without an _events.tsv the recording's own EDF+ annotations are the scoring.
 *
 * Problems are collected and reported together (CohortError) as for the table: missing or
 * malformed participants.tsv, duplicate participant_id, empty group cells, subjects with
 * folders but no participants.tsv row and vice versa, file names that break the BIDS pattern,
 * recordings that are neither EDF nor BDF, an .edf and a .bdf with the same entities, missing
 * _eeg.json, malformed sidecars.
 */
import { readdir, readFile } from 'node:fs/promises';
import path from 'node:path';
import { z } from 'zod';
import { cellValue, parseDelimited } from './delimited.ts';
import { columnKind, typedValue } from './typed-columns.ts';
import { bidsCoordsystemName, bidsElectrodesFile, ElectrodesFileError, parseCoordsystem } from './positions.ts';
import { parseElectrodesTsv, type ElectrodeLayout } from '../../src/core/montage/electrodes-file.ts';
import type { BidsChannel, BidsRecordingInfo, Cohort, CohortProblem, CohortRecording, ColumnKind } from './types.ts';
import { CohortError } from './types.ts';

/** BIDS label: alphanumeric. */
export const BIDS_LABEL = /^[a-zA-Z0-9]+$/;
/** BIDS index (run): a non-negative integer. */
const BIDS_INDEX = /^\d+$/;
/** Entities of an EEG file name, in the order BIDS requires. */
const ENTITY_ORDER = ['sub', 'ses', 'task', 'acq', 'run'] as const;
const RECORDING_SUFFIX = /_eeg\.([a-z0-9]+)$/i;
/** Recording formats read (BIDS EEG also allows others that bandwise does not read). */
const READ_EXTENSIONS = ['edf', 'bdf'];

const eegJsonSchema = z.looseObject({
  SamplingFrequency: z.number({ error: 'SamplingFrequency must be a number (Hz)' }).positive({ error: 'SamplingFrequency must be positive' }).optional(),
  EEGReference: z.string({ error: 'EEGReference must be a string' }).optional(),
  PowerLineFrequency: z.union([z.literal(50), z.literal(60), z.literal('n/a')], { error: 'PowerLineFrequency must be 50, 60 or "n/a"' }).optional(),
});

interface FileName {
  entities: Map<string, string>;
  stem: string;
}

/** Splits 'sub-01_ses-2_task-sleep_eeg.edf' into entities; problems name the file. */
function parseRecordingName(name: string, rel: string, problems: CohortProblem[]): FileName | null {
  const stem = name.replace(RECORDING_SUFFIX, '');
  const entities = new Map<string, string>();
  let last = -1;
  for (const part of stem.split('_')) {
    const dash = part.indexOf('-');
    const key = dash > 0 ? part.slice(0, dash) : part;
    const value = dash > 0 ? part.slice(dash + 1) : '';
    const order = (ENTITY_ORDER as readonly string[]).indexOf(key);
    if (order < 0 || value === '') {
      problems.push({
        row: null,
        column: null,
        message: `${rel}: '${part}' is not an EEG file-name entity (expected sub-, ses-, task-, acq-, run- in that order)`,
      });
      return null;
    }
    if (order <= last) {
      problems.push({ row: null, column: null, message: `${rel}: entity '${key}' is out of order or repeated (BIDS order: ${ENTITY_ORDER.join(', ')})` });
      return null;
    }
    if (key === 'run' ? !BIDS_INDEX.test(value) : !BIDS_LABEL.test(value)) {
      problems.push({
        row: null,
        column: null,
        message: `${rel}: '${part}' — a ${key === 'run' ? 'run index must be a non-negative integer' : 'label must be alphanumeric'}`,
      });
      return null;
    }
    last = order;
    entities.set(key, value);
  }
  if (!entities.has('sub') || !entities.has('task')) {
    problems.push({ row: null, column: null, message: `${rel}: the file name needs sub-<label> and task-<label>` });
    return null;
  }
  return { entities, stem };
}

async function readText(abs: string): Promise<string | null> {
  try {
    return await readFile(abs, 'utf8');
  } catch {
    return null;
  }
}

async function listDir(abs: string): Promise<{ name: string; dir: boolean }[]> {
  try {
    const entries = await readdir(abs, { withFileTypes: true });
    return entries.map((e) => ({ name: e.name, dir: e.isDirectory() })).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  } catch {
    return [];
  }
}

function parseChannels(text: string, rel: string, problems: CohortProblem[]): BidsChannel[] {
  const t = parseDelimited(text, '\t');
  const header = t.header.map((h) => h.trim());
  if (header[0] !== 'name' || header[1] !== 'type' || header[2] !== 'units') {
    problems.push({ row: null, column: null, message: `${rel}: the first columns must be name, type, units (BIDS), found ${header.join(', ')}` });
    return [];
  }
  const statusCol = header.indexOf('status');
  const channels: BidsChannel[] = [];
  t.rows.forEach((r, i) => {
    if (r.cells.length !== header.length) {
      problems.push({ row: i + 1, column: null, message: `${rel}: row ${i + 1} has ${r.cells.length} fields, the header has ${header.length}` });
      return;
    }
    const name = cellValue(r.cells[0]);
    if (name === null) {
      problems.push({ row: i + 1, column: 'name', message: `${rel}: row ${i + 1} has no channel name` });
      return;
    }
    const status = statusCol >= 0 ? cellValue(r.cells[statusCol]) : null;
    if (status !== null && status !== 'good' && status !== 'bad') {
      problems.push({ row: i + 1, column: 'status', message: `${rel}: row ${i + 1}: status '${status}' must be good, bad or n/a` });
    }
    channels.push({ name, type: cellValue(r.cells[1]) ?? 'n/a', units: cellValue(r.cells[2]) ?? 'n/a', status });
  });
  return channels;
}

function parseEegJson(text: string, rel: string, problems: CohortProblem[]): Omit<BidsRecordingInfo, 'channels'> | null {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    problems.push({ row: null, column: null, message: `${rel}: not valid JSON (${(e as Error).message})` });
    return null;
  }
  const parsed = eegJsonSchema.safeParse(json);
  if (!parsed.success) {
    for (const issue of parsed.error.issues) problems.push({ row: null, column: String(issue.path[0] ?? ''), message: `${rel}: ${issue.message}` });
    return null;
  }
  const d = parsed.data;
  return {
    samplingHz: d.SamplingFrequency ?? null,
    reference: d.EEGReference === undefined || d.EEGReference === 'n/a' ? null : d.EEGReference,
    powerLineHz: d.PowerLineFrequency === undefined || d.PowerLineFrequency === 'n/a' ? null : d.PowerLineFrequency,
  };
}

/** Checks the header of an _events.tsv against our scoring convention (the rows are read at ingest). */
function checkEventsHeader(text: string, rel: string, problems: CohortProblem[]): void {
  const header = (text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0] ?? '').split('\t').map((h) => h.trim().toLowerCase());
  const missing = ['onset', 'duration'].filter((c) => !header.includes(c));
  if (missing.length) problems.push({ row: null, column: missing[0], message: `${rel}: required column(s) ${missing.join(', ')} missing (BIDS _events.tsv)` });
  if (!header.includes('stage') && !header.includes('trial_type')) {
    problems.push({ row: null, column: 'stage', message: `${rel}: no 'stage' or 'trial_type' column to carry the sleep stages` });
  }
}

/** Discovers a BIDS EEG folder; throws CohortError listing every problem found. */
export async function discoverBids(folder: string): Promise<Cohort> {
  const root = path.resolve(folder);
  const problems: CohortProblem[] = [];

  // participants.tsv
  const ptsvText = await readText(path.join(root, 'participants.tsv'));
  if (ptsvText === null)
    throw new CohortError(path.join(folder, 'participants.tsv'), [
      { row: null, column: null, message: 'participants.tsv is missing or unreadable: it lists the subjects and their group and covariates' },
    ]);
  const ptsv = parseDelimited(ptsvText, '\t');
  const header = ptsv.header.map((h) => h.trim());
  const idCol = header.indexOf('participant_id');
  if (idCol < 0)
    throw new CohortError(path.join(folder, 'participants.tsv'), [
      { row: null, column: 'participant_id', message: `required column 'participant_id' is missing (header: ${header.join(', ')})` },
    ]);
  const groupCol = header.indexOf('group');
  const covariateNames = header.filter((h, i) => i !== idCol && i !== groupCol);
  const pRows = ptsv.rows.filter((r) => r.cells.length === header.length);
  ptsv.rows.forEach((r, i) => {
    if (r.cells.length !== header.length)
      problems.push({ row: i + 1, column: null, message: `participants.tsv: row ${i + 1} has ${r.cells.length} fields, the header has ${header.length}` });
  });
  const kinds = new Map<string, ColumnKind>();
  for (const name of covariateNames) kinds.set(name, columnKind(pRows.map((r) => cellValue(r.cells[header.indexOf(name)]))));

  const subjects = new Map<string, { row: number; group: string | null; covariates: Record<string, number | string | null> }>();
  ptsv.rows.forEach((r, i) => {
    const row = i + 1;
    if (r.cells.length !== header.length) return;
    const id = cellValue(r.cells[idCol]);
    const m = id === null ? null : /^sub-(.+)$/.exec(id);
    if (!m || !BIDS_LABEL.test(m[1])) {
      problems.push({
        row,
        column: 'participant_id',
        message: `participants.tsv: participant_id '${id ?? ''}' must be 'sub-<label>' with an alphanumeric label`,
      });
      return;
    }
    if (subjects.has(m[1])) {
      problems.push({ row, column: 'participant_id', message: `participants.tsv: '${id}' is already in row ${subjects.get(m[1])!.row}` });
      return;
    }
    const group = groupCol >= 0 ? cellValue(r.cells[groupCol]) : null;
    if (groupCol >= 0 && group === null)
      problems.push({
        row,
        column: 'group',
        message: `participants.tsv: group of '${id}' is empty (the table has a group column, so every subject needs one)`,
      });
    const covariates: Record<string, number | string | null> = {};
    for (const name of covariateNames) covariates[name] = typedValue(cellValue(r.cells[header.indexOf(name)]), kinds.get(name)!);
    subjects.set(m[1], { row, group, covariates });
  });

  // sub-*/[ses-*/]eeg/*_eeg.edf or *_eeg.bdf
  const recordings: CohortRecording[] = [];
  const withData = new Set<string>();
  /** folder/stem → the recording file already taken for it (an .edf and a .bdf must not share a name) */
  const stems = new Map<string, string>();
  for (const entry of await listDir(root)) {
    if (!entry.dir || !entry.name.startsWith('sub-')) continue;
    const subject = entry.name.slice(4);
    if (!BIDS_LABEL.test(subject)) {
      problems.push({ row: null, column: null, message: `folder '${entry.name}': a subject label must be alphanumeric` });
      continue;
    }
    const subDir = path.join(root, entry.name);
    const eegDirs: { dir: string; session: string | null }[] = [];
    for (const inner of await listDir(subDir)) {
      if (!inner.dir) continue;
      if (inner.name === 'eeg') eegDirs.push({ dir: path.join(subDir, 'eeg'), session: null });
      else if (inner.name.startsWith('ses-')) {
        const session = inner.name.slice(4);
        if (!BIDS_LABEL.test(session))
          problems.push({ row: null, column: null, message: `folder '${entry.name}/${inner.name}': a session label must be alphanumeric` });
        else eegDirs.push({ dir: path.join(subDir, inner.name, 'eeg'), session });
      }
    }
    if (!subjects.has(subject)) problems.push({ row: null, column: 'participant_id', message: `folder '${entry.name}' has no row in participants.tsv` });

    for (const { dir, session } of eegDirs) {
      const listing = await listDir(dir);
      const fileNames = listing.filter((f) => !f.dir).map((f) => f.name);
      for (const f of listing) {
        const m = RECORDING_SUFFIX.exec(f.name);
        if (f.dir || !m || m[1].toLowerCase() === 'json') continue;
        const rel = path.relative(root, path.join(dir, f.name));
        if (!READ_EXTENSIONS.includes(m[1].toLowerCase())) {
          problems.push({ row: null, column: null, message: `${rel}: only EDF and BDF recordings are read (found .${m[1]})` });
          continue;
        }
        const parsed = parseRecordingName(f.name, rel, problems);
        if (!parsed) continue;
        const twin = stems.get(path.join(dir, parsed.stem));
        if (twin !== undefined) {
          problems.push({ row: null, column: null, message: `${rel}: ${twin} has the same entities; keep one recording per name` });
          continue;
        }
        stems.set(path.join(dir, parsed.stem), f.name);
        if (parsed.entities.get('sub') !== subject) {
          problems.push({ row: null, column: null, message: `${rel}: sub-${parsed.entities.get('sub')} in the file name, but the folder is sub-${subject}` });
          continue;
        }
        if ((parsed.entities.get('ses') ?? null) !== session) {
          problems.push({
            row: null,
            column: null,
            message: `${rel}: ${parsed.entities.has('ses') ? `ses-${parsed.entities.get('ses')}` : 'no ses- entity'} in the file name, but the folder is ${session === null ? 'not a session folder' : `ses-${session}`}`,
          });
          continue;
        }
        withData.add(subject);
        const side = (suffix: string) => path.join(dir, `${parsed.stem}_${suffix}`);
        const jsonText = await readText(side('eeg.json'));
        let info: Omit<BidsRecordingInfo, 'channels'> | null = null;
        if (jsonText === null) problems.push({ row: null, column: null, message: `${rel}: the sidecar ${parsed.stem}_eeg.json is missing (BIDS requires it)` });
        else info = parseEegJson(jsonText, path.relative(root, side('eeg.json')), problems);
        const channelsText = await readText(side('channels.tsv'));
        const channels = channelsText === null ? [] : parseChannels(channelsText, path.relative(root, side('channels.tsv')), problems);
        const eventsText = await readText(side('events.tsv'));
        if (eventsText !== null) checkEventsHeader(eventsText, path.relative(root, side('events.tsv')), problems);
        const positions = await bidsPositions(root, dir, fileNames, parsed.entities, rel, problems);
        const p = subjects.get(subject);
        recordings.push({
          row: p?.row ?? 0,
          subject,
          session,
          group: p?.group ?? null,
          recordingPath: path.join(dir, f.name),
          scoringPath: eventsText === null ? null : side('events.tsv'),
          covariates: { ...(p?.covariates ?? {}) },
          bids: { samplingHz: info?.samplingHz ?? null, reference: info?.reference ?? null, powerLineHz: info?.powerLineHz ?? null, channels },
          ...(positions ? { positions } : {}),
        });
      }
    }
  }
  for (const [subject, p] of subjects) {
    if (!withData.has(subject))
      problems.push({
        row: p.row,
        column: 'participant_id',
        message: `participants.tsv: 'sub-${subject}' has no EEG recording (sub-${subject}/[ses-*/]eeg/*_eeg.edf or .bdf)`,
      });
  }
  if (problems.length) throw new CohortError(folder, problems);

  recordings.sort((a, b) => a.row - b.row || cmp(a.session ?? '', b.session ?? '') || cmp(a.recordingPath, b.recordingPath));
  const columns = [
    { name: 'subject', kind: 'string' as const },
    ...(groupCol >= 0 ? [{ name: 'group', kind: 'string' as const }] : []),
    ...covariateNames.map((name) => ({ name, kind: kinds.get(name)! })),
  ];
  const participants = [...subjects].map(([subject, p]) => ({ subject, ...(groupCol >= 0 ? { group: p.group } : {}), ...p.covariates }));
  return { source: 'bids', root, recordings, columns, participants };
}

/** The positions of a recording from the electrodes file that goes with it and its _coordsystem.json (required by BIDS); null without one. */
async function bidsPositions(
  root: string,
  dir: string,
  fileNames: readonly string[],
  entities: ReadonlyMap<string, string>,
  rel: string,
  problems: CohortProblem[],
): Promise<ElectrodeLayout | null> {
  const found = bidsElectrodesFile(fileNames, entities);
  if (found === null) return null;
  if (typeof found !== 'string') {
    problems.push({ row: null, column: null, message: `${rel}: ${found.ambiguous.join(' and ')} both fit; keep one electrodes file per recording` });
    return null;
  }
  const electrodesRel = path.relative(root, path.join(dir, found));
  const coordName = bidsCoordsystemName(found);
  const coordText = await readText(path.join(dir, coordName));
  if (coordText === null) {
    problems.push({
      row: null,
      column: null,
      message: `${electrodesRel}: its ${coordName} is missing (BIDS requires one with every electrodes file: it gives the unit and the coordinate system)`,
    });
    return null;
  }
  try {
    const frame = parseCoordsystem(coordText, path.relative(root, path.join(dir, coordName)));
    const text = await readText(path.join(dir, found));
    if (text === null) throw new ElectrodesFileError(`${electrodesRel}: cannot be read`);
    return parseElectrodesTsv(text, { file: electrodesRel, unit: frame.unit, coordinateSystem: frame.system });
  } catch (e) {
    if (!(e instanceof ElectrodesFileError)) throw e;
    problems.push({ row: null, column: null, message: e.message });
    return null;
  }
}

const cmp = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);
