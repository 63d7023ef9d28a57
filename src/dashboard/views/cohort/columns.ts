// Screen labels of the cohort tables' columns (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';
import { deviationLink } from '../deviation/deviation-params.ts';

const RECORDING_COLUMNS: readonly DataColumn[] = [
  // each recording links to its detail on the quality screen (its spectrum, rejections and night)
  {
    key: 'recording_id',
    label: 'Recording',
    href: (r) => (r.subject === null || r.subject === undefined ? null : `#/quality?${new URLSearchParams({ subject: String(r.subject) })}`),
  },
  // each subject links to its deviation map
  { key: 'subject', label: 'Subject', href: (r) => (r.subject === null || r.subject === undefined ? null : deviationLink(String(r.subject))) },
  { key: 'session', label: 'Session' },
  { key: 'group', label: 'Group' },
  { key: 'file_name', label: 'File' },
  { key: 'status', label: 'Status' },
  { key: 'duration_min', label: 'Duration (min)', digits: 1 },
  { key: 'fs_hz', label: 'Sampling rate (Hz)' },
  { key: 'n_channels', label: 'Channels' },
];

const ARCHITECTURE_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'session', label: 'Session' },
  { key: 'group', label: 'Group' },
  { key: 'w_min', label: 'W (min)', digits: 1 },
  { key: 'n1_min', label: 'N1 (min)', digits: 1 },
  { key: 'n2_min', label: 'N2 (min)', digits: 1 },
  { key: 'n3_min', label: 'N3 (min)', digits: 1 },
  { key: 'r_min', label: 'R (min)', digits: 1 },
  { key: 'unscored_min', label: 'Unscored (min)', digits: 1 },
  { key: 'tst_min', label: 'Total sleep (min)', digits: 1 },
  { key: 'se_pct', label: 'Sleep efficiency (%)', digits: 1 },
  { key: 'sol_min', label: 'Sleep onset latency (min)', digits: 1 },
  { key: 'rem_latency_min', label: 'R latency (min)', digits: 1 },
  { key: 'waso_min', label: 'Wake after sleep onset (min)', digits: 1 },
  { key: 'n1_pct', label: 'N1 (% sleep)', digits: 1 },
  { key: 'n2_pct', label: 'N2 (% sleep)', digits: 1 },
  { key: 'n3_pct', label: 'N3 (% sleep)', digits: 1 },
  { key: 'r_pct', label: 'R (% sleep)', digits: 1 },
];

/** The recording columns present in the query result, in display order. */
export function recordingColumns(present: readonly string[]): DataColumn[] {
  return RECORDING_COLUMNS.filter((c) => present.includes(c.key));
}

/** Sleep architecture columns present in the query result; empty when none is stored. */
export function architectureColumns(present: readonly string[]): DataColumn[] {
  const cols = ARCHITECTURE_COLUMNS.filter((c) => present.includes(c.key));
  return cols.some((c) => c.key.endsWith('_min') || c.key.endsWith('_pct')) ? cols : [];
}

export const GROUP_SIZE_COLUMNS: readonly DataColumn[] = [
  { key: 'group', label: 'Group' },
  { key: 'subjects', label: 'Subjects' },
  { key: 'recordings', label: 'Recordings' },
  { key: 'withSpectra', label: 'With spectra' },
];

export const ERROR_COLUMNS: readonly DataColumn[] = [
  { key: 'run_id', label: 'Run' },
  { key: 'file', label: 'File' },
  { key: 'step', label: 'Step' },
  { key: 'field', label: 'Field' },
  { key: 'message', label: 'Message' },
];
