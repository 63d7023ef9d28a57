/**
 * Lays a cohort out as a BIDS EEG folder (BIDS specification; facts in shared/STANDARDS.md), so
 * the same cohort can be ingested from both layouts and compared:
 *   dataset_description.json                   Name, BIDSVersion, DatasetType (required file)
 *   participants.tsv                           participant_id, group (if any), covariates; n/a for missing
 *   sub-<s>/[ses-<t>/]eeg/sub-<s>[_ses-<t>]_task-<task>[_run-<i>]_eeg.edf   hard link, else a copy
 *     …_eeg.json      TaskName, EEGReference, SamplingFrequency, PowerLineFrequency, SoftwareFilters
 *     …_channels.tsv  name, type, units[, status] — header only when no channel list is known
 *     …_events.tsv    the scoring in our convention (see bids.ts): onset, duration, stage; one row
 *                     per run of equal stages; unscored stretches are left out (they read back as gaps)
 * Recordings without a scoring file keep their EDF+ annotations as the scoring and get no _events.tsv.
 * The scoring is read (with the recording's length from its EDF header) and written anew, so a
 * scoring that cannot be read stops the copy with its ScoringError.
 */
import { copyFile, link, mkdir, readdir, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { openEdf } from '../../ingest/edf/reader.ts';
import { edfStartSeconds } from '../../ingest/hypnogram/clock.ts';
import { readScoring } from '../../ingest/hypnogram/read.ts';
import type { ScoringOptions, ScoringWarning } from '../../ingest/hypnogram/types.ts';
import { BIDS_LABEL } from '../../ingest/cohort/bids.ts';
import type { BidsChannel, Cohort, CohortProblem, CohortRecording } from '../../ingest/cohort/types.ts';
import { CohortError } from '../../ingest/cohort/types.ts';

/** BIDS version the layout follows (from memory of the specification's releases; confirm). */
export const BIDS_VERSION = '1.9.0';

export interface EegSidecar {
  SamplingFrequency?: number;
  EEGReference?: string;
  PowerLineFrequency?: 50 | 60 | 'n/a';
  SoftwareFilters?: string | Record<string, unknown>;
}

export interface WriteBidsOptions {
  /** Task label of every recording; default 'sleep'. */
  task?: string;
  /** Channel list for _channels.tsv: one for all recordings, or per recording. Else the recording's BIDS info, else header only. */
  channels?: BidsChannel[] | ((r: CohortRecording) => BidsChannel[] | null);
  /** _eeg.json fields: one for all recordings, or per recording. Else the recording's BIDS info, else 'n/a'. */
  eeg?: EegSidecar | ((r: CohortRecording) => EegSidecar | null);
  /** How the scoring files are read (epoch length, label map, unknownAs). */
  scoring?: ScoringOptions;
  /** dataset_description.json Name; default 'bandwise BIDS copy'. */
  datasetName?: string;
}

export interface WriteBidsResult {
  root: string;
  /** Absolute path of each recording in the copy, in cohort order. */
  recordingPaths: string[];
  /** Warnings from reading each scoring file (gaps, ignored events…), by cohort row. */
  scoringWarnings: { row: number; warnings: ScoringWarning[] }[];
}

const tsvCell = (v: number | string | null) => (v === null ? 'n/a' : String(v));

export async function writeBidsCopy(cohort: Cohort, outFolder: string, options: WriteBidsOptions = {}): Promise<WriteBidsResult> {
  const root = path.resolve(outFolder);
  const task = options.task ?? 'sleep';
  const problems: CohortProblem[] = [];
  if (!BIDS_LABEL.test(task)) problems.push({ row: null, column: null, message: `task label '${task}' must be alphanumeric (BIDS)` });
  for (const r of cohort.recordings) {
    if (!BIDS_LABEL.test(r.subject))
      problems.push({ row: r.row, column: 'subject', message: `subject '${r.subject}' is not a BIDS label (letters and digits only)` });
    if (r.session !== null && !BIDS_LABEL.test(r.session))
      problems.push({ row: r.row, column: 'session', message: `session '${r.session}' is not a BIDS label (letters and digits only)` });
  }
  for (const p of cohort.participants) {
    for (const [k, v] of Object.entries(p)) {
      if (typeof v === 'string' && /[\t\r\n]/.test(v))
        problems.push({ row: null, column: k, message: `value of '${k}' for subject '${p.subject}' holds a tab or line break, which a BIDS TSV cannot carry` });
    }
  }
  const existing = await readdir(root).catch(() => [] as string[]);
  if (existing.length) problems.push({ row: null, column: null, message: `the output folder is not empty (${existing.length} entries)` });
  if (problems.length) throw new CohortError(outFolder, problems);
  await mkdir(root, { recursive: true });

  await writeFile(
    path.join(root, 'dataset_description.json'),
    JSON.stringify({ Name: options.datasetName ?? 'bandwise BIDS copy', BIDSVersion: BIDS_VERSION, DatasetType: 'raw' }, null, 2) + '\n',
  );

  const participantColumns = cohort.columns.map((c) => c.name).filter((n) => n !== 'subject');
  const ptsv = [
    ['participant_id', ...participantColumns].join('\t'),
    ...cohort.participants.map((p) => [`sub-${p.subject}`, ...participantColumns.map((c) => tsvCell(p[c] ?? null))].join('\t')),
  ];
  await writeFile(path.join(root, 'participants.tsv'), ptsv.join('\n') + '\n');

  // Several recordings with the same subject/session get run indices 1, 2, …
  const baseOf = (r: CohortRecording) => `sub-${r.subject}${r.session === null ? '' : `_ses-${r.session}`}_task-${task}`;
  const perBase = new Map<string, number>();
  for (const r of cohort.recordings) perBase.set(baseOf(r), (perBase.get(baseOf(r)) ?? 0) + 1);
  const runCounter = new Map<string, number>();

  const recordingPaths: string[] = [];
  const scoringWarnings: WriteBidsResult['scoringWarnings'] = [];
  for (const r of cohort.recordings) {
    const base = baseOf(r);
    const run = (runCounter.get(base) ?? 0) + 1;
    runCounter.set(base, run);
    const stem = perBase.get(base)! > 1 ? `${base}_run-${run}` : base;
    const dir = path.join(root, `sub-${r.subject}`, ...(r.session === null ? [] : [`ses-${r.session}`]), 'eeg');
    await mkdir(dir, { recursive: true });

    const edfPath = path.join(dir, `${stem}_eeg.edf`);
    await link(r.recordingPath, edfPath).catch(() => copyFile(r.recordingPath, edfPath));
    recordingPaths.push(edfPath);

    const eeg = (typeof options.eeg === 'function' ? options.eeg(r) : options.eeg) ?? null;
    const samplingHz = eeg?.SamplingFrequency ?? r.bids?.samplingHz ?? null;
    const sidecar: Record<string, unknown> = {
      TaskName: task,
      EEGReference: eeg?.EEGReference ?? r.bids?.reference ?? 'n/a',
      ...(samplingHz === null ? {} : { SamplingFrequency: samplingHz }),
      PowerLineFrequency: eeg?.PowerLineFrequency ?? r.bids?.powerLineHz ?? 'n/a',
      SoftwareFilters: eeg?.SoftwareFilters ?? 'n/a',
    };
    await writeFile(path.join(dir, `${stem}_eeg.json`), JSON.stringify(sidecar, null, 2) + '\n');

    const channels = (typeof options.channels === 'function' ? options.channels(r) : options.channels) ?? r.bids?.channels ?? [];
    const withStatus = channels.some((c) => c.status !== null);
    const ctsv = [
      ['name', 'type', 'units', ...(withStatus ? ['status'] : [])].join('\t'),
      ...channels.map((c) => [c.name, c.type, c.units, ...(withStatus ? [tsvCell(c.status)] : [])].join('\t')),
    ];
    await writeFile(path.join(dir, `${stem}_channels.tsv`), ctsv.join('\n') + '\n');

    if (r.scoringPath !== null) {
      const edf = await openEdf(r.recordingPath);
      // an EDF+/BDF+ scoring file is placed on the recording by absolute time (tables and text ignore `recording`)
      const recording = { startS: edfStartSeconds(edf), durationS: edf.durationS };
      await edf.close();
      const hyp = await readScoring(r.scoringPath, { ...options.scoring, recordingDurationS: recording.durationS, recording });
      scoringWarnings.push({ row: r.row, warnings: hyp.warnings });
      const rows = ['onset\tduration\tstage'];
      for (let k = 0; k < hyp.stages.length;) {
        let end = k + 1;
        while (end < hyp.stages.length && hyp.stages[end] === hyp.stages[k]) end++;
        if (hyp.stages[k] !== 'unscored') rows.push(`${k * hyp.epochS}\t${(end - k) * hyp.epochS}\t${hyp.stages[k]}`);
        k = end;
      }
      await writeFile(path.join(dir, `${stem}_events.tsv`), rows.join('\n') + '\n');
    }
  }
  return { root, recordingPaths, scoringWarnings };
}
