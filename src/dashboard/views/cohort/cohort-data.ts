// Everything the cohort view shows, loaded in one go.
import type { Row, SqlClient } from '../../../queries/client.ts';
import { groupSizes, ingestErrors, participants, recordingsOverview, type GroupSize } from '../../../queries/cohort.ts';
import { groupingColumns, type CohortSchema, type TableColumn } from '../../../queries/schema.ts';

export interface CohortData {
  groupColumn: string | null;
  sizes: GroupSize[];
  participantColumns: TableColumn[];
  participants: Row[];
  recordings: Row[];
  errors: Row[];
}

/** The grouping column asked for in the address bar (`by`), else `group`, else the first text column. */
export function chooseGroupColumn(schema: CohortSchema, asked: string | undefined): string | null {
  const candidates = groupingColumns(schema);
  if (asked === '') return null;
  if (asked !== undefined && candidates.includes(asked)) return asked;
  if (candidates.includes('group')) return 'group';
  return candidates[0] ?? null;
}

export async function loadCohort(db: SqlClient, schema: CohortSchema, groupColumn: string | null): Promise<CohortData> {
  const sizes = await groupSizes(db, schema, groupColumn);
  const p = await participants(db, schema);
  const recordings = await recordingsOverview(db, schema, groupColumn);
  const errors = await ingestErrors(db, schema);
  return { groupColumn, sizes, participantColumns: p.columns, participants: p.rows, recordings, errors };
}
