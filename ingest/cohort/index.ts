export type { BidsChannel, BidsRecordingInfo, Cohort, CohortProblem, CohortRecording, ColumnKind } from './types.ts';
export { CohortError } from './types.ts';
export { readCohortTable } from './table.ts';
export { discoverBids } from './bids.ts';
export { discoverCohort } from './discover.ts';
export type { ContrastColumns, ContrastColumnCounts } from './contrast-columns.ts';
export { checkContrastColumns } from './contrast-columns.ts';
