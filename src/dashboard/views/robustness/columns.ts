// Screen labels of the robustness view's table (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';

export const PATH_COLUMNS: readonly DataColumn[] = [
  { key: 'rank', label: 'Rank' },
  { key: 'path', label: 'Path' },
  { key: 'description', label: 'Choices' },
  { key: 'effect', label: 'Effect size', digits: 2 },
  { key: 'ci_low', label: 'CI low', digits: 2 },
  { key: 'ci_high', label: 'CI high', digits: 2 },
  { key: 'p', label: 'p', digits: 4 },
  { key: 'significant', label: 'Significant' },
  { key: 'n', label: 'n' },
];
