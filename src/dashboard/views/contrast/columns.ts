// Screen labels of the contrast view's tables (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';

export const CLUSTER_COLUMNS: readonly DataColumn[] = [
  { key: 'cluster', label: 'Cluster' },
  { key: 'sign', label: 'Sign' },
  { key: 'direction', label: 'Direction' },
  { key: 'fmin_hz', label: 'From (Hz)' },
  { key: 'fmax_hz', label: 'To (Hz)' },
  { key: 'channels', label: 'Channels' },
  { key: 'mass', label: 'Mass (Σ t)', digits: 1 },
  { key: 'size', label: 'Points' },
  { key: 'p', label: 'p', digits: 4 },
  { key: 'significant', label: 'p < 0.05' },
];

export const LEFT_OUT_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'channel', label: 'Channel' },
  { key: 'reason', label: 'Reason' },
];
