// Screen labels of the quality screen's tables (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';

export const FLAG_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'channel', label: 'Channel' },
  { key: 'stage', label: 'Stage' },
  { key: 'metric', label: 'Metric' },
  { key: 'value', label: 'Value', digits: 3 },
  { key: 'severity', label: 'Severity', digits: 2 },
  { key: 'reason', label: 'Reason' },
];

export const CELL_ROW_COLUMNS: readonly DataColumn[] = [
  { key: 'stage', label: 'Stage' },
  { key: 'metric', label: 'Metric' },
  { key: 'value', label: 'Value', digits: 3 },
  { key: 'severity', label: 'Severity', digits: 2 },
  { key: 'flagged', label: 'Flagged' },
  { key: 'reason', label: 'Reason' },
];

export const REJECTION_COLUMNS: readonly DataColumn[] = [
  { key: 'reason', label: 'Rejection rule' },
  { key: 'epochs', label: 'Epochs' },
  { key: 'percent', label: '% of epochs', digits: 1 },
];

export const EXCLUSION_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'channel', label: 'Channel' },
  { key: 'reason', label: 'Reason' },
];
