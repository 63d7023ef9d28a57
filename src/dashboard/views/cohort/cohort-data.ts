// Everything the cohort view shows, loaded in one go.
import type { Row, SqlClient } from '../../../queries/client.ts';
import { groupSizes, ingestErrors, participants, recordingsOverview, type GroupSize } from '../../../queries/cohort.ts';
import { groupingColumns, type CohortSchema, type TableColumn } from '../../../queries/schema.ts';
import { NO_WORKFLOW, type WorkflowState } from '../../../queries/workflow.ts';

export interface CohortData {
  groupColumn: string | null;
  sizes: GroupSize[];
  participantColumns: TableColumn[];
  participants: Row[];
  recordings: Row[];
  errors: Row[];
}

/** The grouping column asked for in the address bar (`by`), else `group`, else the first text column; never the `hidden` (blinded) one. */
export function chooseGroupColumn(schema: CohortSchema, asked: string | undefined, hidden: string | null = null): string | null {
  const candidates = groupingColumns(schema).filter((c) => c !== hidden);
  if (asked === '') return null;
  if (asked !== undefined && candidates.includes(asked)) return asked;
  if (candidates.includes('group')) return 'group';
  return candidates[0] ?? null;
}

/**
 * While a split exists the participants table gains each subject's part; while it is blinded the
 * blinded column is left out (a subject beside its group, coded or not, would give the coding away).
 */
export async function loadCohort(db: SqlClient, schema: CohortSchema, groupColumn: string | null, workflow: WorkflowState = NO_WORKFLOW): Promise<CohortData> {
  const hidden = workflow.split?.blindColumn ?? null;
  if (groupColumn !== null && groupColumn === hidden) throw new Error(`the groups of "${hidden}" are blinded while exploring`);
  const sizes = await groupSizes(db, schema, groupColumn);
  const p = await participants(db, schema);
  const recordings = await recordingsOverview(db, schema, groupColumn);
  const errors = await ingestErrors(db, schema);
  const columns = p.columns.filter((c) => c.name !== hidden);
  const rows = p.rows.map((r) => {
    const rest = { ...r };
    if (hidden !== null) delete rest[hidden];
    return workflow.split ? { ...rest, part: workflow.parts.get(String(r.subject)) ?? null } : rest;
  });
  return {
    groupColumn,
    sizes,
    participantColumns: workflow.split ? [...columns, { name: 'part', type: 'VARCHAR' }] : columns,
    participants: rows,
    recordings,
    errors,
  };
}
