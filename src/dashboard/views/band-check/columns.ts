// Screen labels of the band check view's table (keys are the TSV headers).
import type { DataColumn } from '../../components/table-columns.ts';

export const EFFECT_COLUMNS: readonly DataColumn[] = [
  { key: 'effect', label: 'Effect' },
  { key: 'size', label: 'Effect size', digits: 2 },
  { key: 'ci_low', label: 'CI low', digits: 2 },
  { key: 'ci_high', label: 'CI high', digits: 2 },
  { key: 't', label: 't', digits: 2 },
  { key: 'p', label: 'p', digits: 4 },
  { key: 'p_adjusted', label: 'p (Bonferroni-adjusted)', digits: 4 },
  { key: 'decides', label: 'Decides the verdict' },
  { key: 'difference', label: 'Difference', digits: 3 },
  { key: 'kind', label: 'Size' },
  { key: 'measure', label: 'Measure' },
];
