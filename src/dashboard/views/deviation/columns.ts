// Screen labels of the deviation view's tables (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';

export const SUBJECT_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'group', label: 'Group' },
  { key: 'reference', label: 'Reference (leave-one-out)' },
  { key: 'share', label: 'Share |z| > 2', digits: 3 },
  { key: 'meanZ', label: 'Mean z', digits: 2 },
];

export const GROUP_COLUMNS: readonly DataColumn[] = [
  { key: 'group', label: 'Group' },
  { key: 'n', label: 'Subjects' },
  { key: 'median', label: 'Median share', digits: 3 },
  { key: 'q75', label: '75 % share', digits: 3 },
  { key: 'max', label: 'Largest share', digits: 3 },
  { key: 'beyondReference95', label: 'Above reference 95 %' },
  { key: 'meanZ', label: 'Mean z', digits: 2 },
];

export const LEFT_OUT_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'channel', label: 'Channel' },
  { key: 'reason', label: 'Reason' },
];
