// The exploration/confirmation workflow as the analyses read it (tables subject_split,
// analysis_plans, plan_confirmations; src/analysis/split-store.ts writes them): the current split,
// the part of it an analysis reads (the exploration part, with the group codes while blinded; the
// confirmation part for a confirmation), and the plans with their confirmations. Read once per
// opened database.
import type { Contrast } from '../core/contrast/spec.ts';
import type { PartView } from '../core/confirmation/part-data.ts';
import type { PlanContent } from '../core/confirmation/plan.ts';
import type { Part } from '../core/confirmation/split.ts';
import { splitOfRows, type SplitRow, type SplitStamp } from '../core/confirmation/stamp.ts';
import { COHORT, rowsOf, type SqlClient } from './client.ts';
import type { CohortSchema } from './schema.ts';

export interface PlanSummary {
  id: string;
  hash: string;
  lockedAt: string;
  splitId: string;
  runId: string;
  /** the contrasts as locked (groups of a blinded split by their codes) */
  contrasts: Contrast[];
  exclusions: number;
  confirmations: { run: number; time: string }[];
}

export interface WorkflowState {
  /** the current split, null when there is none */
  split: SplitStamp | null;
  /** the exploration part every analysis reads (null: no split, every subject) */
  view: PartView | null;
  /** part of each subject of the current split */
  parts: ReadonlyMap<string, Part>;
  /** splits made before the current one and replaced */
  earlierSplits: number;
  plans: PlanSummary[];
}

export const NO_WORKFLOW: WorkflowState = { split: null, view: null, parts: new Map(), earlierSplits: 0, plans: [] };

const ISO = (col: string) => `strftime(${col}, '%Y-%m-%dT%H:%M:%S.%gZ') AS ${col}`;

export async function readWorkflow(db: SqlClient, schema: CohortSchema): Promise<WorkflowState> {
  if (!schema.has('subject_split', 'split_id', 'group_codes') || !schema.has('analysis_plans', 'plan') || !schema.has('plan_confirmations', 'plan_id'))
    return NO_WORKFLOW;
  const [splitRows, earlier, planRows, confirmationRows] = await Promise.all([
    db.query(`SELECT split_id, subject, part, seed::DOUBLE AS seed, fraction, stratify::VARCHAR AS stratify, blind_column, group_codes::VARCHAR AS group_codes, ${ISO('made_at')}
              FROM ${COHORT}.subject_split WHERE replaced_at IS NULL ORDER BY subject`),
    db.query(`SELECT count(DISTINCT split_id)::DOUBLE AS n FROM ${COHORT}.subject_split WHERE replaced_at IS NOT NULL`),
    db.query(`SELECT plan_id, sha256, ${ISO('locked_at')}, split_id, run_id, plan::VARCHAR AS plan FROM ${COHORT}.analysis_plans ORDER BY locked_at, plan_id`),
    db.query(`SELECT plan_id, confirmation_run::DOUBLE AS run, ${ISO('confirmed_at')} FROM ${COHORT}.plan_confirmations ORDER BY plan_id, confirmation_run`),
  ]).then((ts) => ts.map(rowsOf));
  const confirmations = confirmationRows.map((r) => ({ planId: String(r.plan_id), run: Number(r.run), time: String(r.confirmed_at) }));
  const plans: PlanSummary[] = planRows.map((r) => {
    const content = JSON.parse(String(r.plan)) as PlanContent;
    const id = String(r.plan_id);
    return {
      id,
      hash: String(r.sha256),
      lockedAt: String(r.locked_at),
      splitId: String(r.split_id),
      runId: String(r.run_id),
      contrasts: content.contrasts,
      exclusions: content.exclusions.length,
      confirmations: confirmations.filter((c) => c.planId === id).map(({ run, time }) => ({ run, time })),
    };
  });
  const earlierSplits = Number(earlier[0]?.n ?? 0);
  if (splitRows.length === 0) return { ...NO_WORKFLOW, earlierSplits, plans };
  const { stamp: split, parts, codes } = splitOfRows(splitRows.map((r) => ({ ...r, made_at: String(r.made_at) }) as SplitRow));
  const view: PartView = {
    split,
    part: 'exploration',
    subjects: new Set([...parts].filter(([, p]) => p === 'exploration').map(([s]) => s)),
    blinding: codes !== null && split.blindColumn !== null ? { column: split.blindColumn, codes } : null,
  };
  return { split, view, parts, earlierSplits, plans };
}

const cache = new WeakMap<SqlClient, Promise<WorkflowState>>();

/** The workflow of an opened database, read once (every loader of that database shares the answer). */
export function workflowOf(db: SqlClient, schema: CohortSchema): Promise<WorkflowState> {
  let w = cache.get(db);
  if (w === undefined) {
    w = readWorkflow(db, schema);
    w.catch(() => cache.delete(db));
    cache.set(db, w);
  }
  return w;
}

/** The part of the current split an analysis reads (null: no split, every subject); only the exploration part is blinded. */
export function partViewOf(w: WorkflowState, part: Part): PartView | null {
  if (w.view === null || part === 'exploration') return w.view;
  const subjects = new Set([...w.parts].filter(([, p]) => p === part).map(([s]) => s));
  return { split: w.view.split, part, subjects, blinding: null };
}
