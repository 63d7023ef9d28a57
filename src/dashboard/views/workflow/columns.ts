// Screen labels of the "Split and plans" view's plan table (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';

export const PLAN_COLUMNS: readonly DataColumn[] = [
  { key: 'plan', label: 'Plan' },
  { key: 'locked_at', label: 'Locked (UTC)' },
  { key: 'sha256', label: 'SHA-256' },
  { key: 'split', label: 'Split' },
  { key: 'contrasts', label: 'Contrasts (as locked)' },
  { key: 'exclusions', label: 'Exclusions' },
  { key: 'confirmations', label: 'Confirmations' },
  { key: 'confirmed_at', label: 'Confirmed (UTC)' },
];
