// Screen labels of the power view's tables (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';

export const CURVE_COLUMNS: readonly DataColumn[] = [
  { key: 'nPerGroup', label: 'n per group' },
  { key: 'power', label: 'Power', digits: 3 },
  { key: 'ciLow', label: '95 % low', digits: 3 },
  { key: 'ciHigh', label: '95 % high', digits: 3 },
  { key: 'found', label: 'Found' },
  { key: 'simulations', label: 'Simulations' },
  { key: 'anySignificant', label: 'Any significant', digits: 3 },
];

export const LEFT_OUT_COLUMNS: readonly DataColumn[] = [
  { key: 'subject', label: 'Subject' },
  { key: 'channel', label: 'Channel' },
  { key: 'reason', label: 'Reason' },
];
