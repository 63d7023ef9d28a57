// Screen labels of the contrast view's tables (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';
import { CLUSTER_TABLE_COLUMNS } from '../../../core/contrast/cluster-table.ts';

/** The cluster table: the command line's --tsv columns (src/core/contrast/cluster-table.ts). */
export const CLUSTER_COLUMNS: readonly DataColumn[] = CLUSTER_TABLE_COLUMNS;

export const LEFT_OUT_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'channel', label: 'Channel' },
  { key: 'reason', label: 'Reason' },
];
