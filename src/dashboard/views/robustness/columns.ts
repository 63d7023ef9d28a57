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
  { key: 'decision', label: 'Decided on' },
  { key: 'centre_effect', label: 'Peak centre effect size', digits: 2 },
  { key: 'centre_difference_hz', label: 'Peak centre difference (Hz)', digits: 2 },
  { key: 'centre_p', label: 'Peak centre p', digits: 4 },
  { key: 'without_peak', label: 'Without a peak in the band' },
];
