/**
 * The workflow's tables (ingest/store/schema.ts CONFIRMATION_TABLES): the split of the subjects,
 * the locked plans and their confirmations. Made on first use by split, lock and confirm; read
 * by every analysis (a database without them has no split).
 */
import type { DuckDBValue } from '@duckdb/node-api';
import type { Store } from '../../ingest/store/index.ts';
import { appendColumns } from '../../ingest/store/chunks.ts';
import { CONFIRMATION_TABLES, createTableSql, type TableDef } from '../../ingest/store/schema.ts';
import type { Part } from '../core/confirmation/split.ts';
import { splitOfRows, type SplitRow, type SplitStamp } from '../core/confirmation/stamp.ts';
import type { PlanContent, StoredPlan } from '../core/confirmation/plan.ts';

export interface StoredSplit {
  stamp: SplitStamp;
  /** part of each subject */
  parts: Map<string, Part>;
  /** real value → code of the blinded column, null when not blinded */
  codes: Record<string, string> | null;
  replacedAt: string | null;
}

export interface StoredConfirmation {
  planId: string;
  run: number;
  time: string;
}

const table = (name: string): TableDef => CONFIRMATION_TABLES.find((t) => t.name === name)!;

async function rows(store: Store, sql: string, values: DuckDBValue[] = []): Promise<Record<string, unknown>[]> {
  return store.exclusive(async () => (await store.connection.runAndReadAll(sql, values)).getRowObjectsJS());
}

const iso = (v: unknown): string => (v as Date).toISOString();

/** Whether the database has the workflow's tables (a database that never had a split has not). */
export async function hasSplitTables(store: Store): Promise<boolean> {
  const r = await rows(
    store,
    `SELECT count(*) AS n FROM duckdb_tables() WHERE database_name = current_database() AND table_name IN ('subject_split', 'analysis_plans', 'plan_confirmations')`,
  );
  return Number(r[0].n) === CONFIRMATION_TABLES.length;
}

/** Creates the workflow's tables where missing (a store opened for writing). */
export async function ensureSplitTables(store: Store): Promise<void> {
  await store.exclusive(async () => {
    for (const t of CONFIRMATION_TABLES) await store.connection.run(createTableSql(t));
  });
}

function splitOf(list: Record<string, unknown>[]): StoredSplit {
  const { stamp, parts, codes } = splitOfRows(list.map((r) => ({ ...r, made_at: iso(r.made_at) }) as SplitRow));
  const replaced = list[0].replaced_at;
  return { stamp, parts, codes, replacedAt: replaced === null ? null : iso(replaced) };
}

/** Every split made on the database, oldest first (the current one last, not replaced). */
export async function readSplits(store: Store): Promise<StoredSplit[]> {
  if (!(await hasSplitTables(store))) return [];
  const list = await rows(store, 'SELECT * FROM subject_split ORDER BY made_at, split_id, subject');
  const bySplit = new Map<string, Record<string, unknown>[]>();
  for (const r of list) bySplit.set(String(r.split_id), [...(bySplit.get(String(r.split_id)) ?? []), r]);
  return [...bySplit.values()].map(splitOf);
}

/** The current split (the one not replaced), or null. */
export async function readCurrentSplit(store: Store): Promise<StoredSplit | null> {
  return (await readSplits(store)).find((s) => s.replacedAt === null) ?? null;
}

/** Stores a new split, marking the current one (if any) replaced at the same time, in one transaction. */
export async function writeSplit(store: Store, split: StoredSplit): Promise<void> {
  const subjects = [...split.parts.keys()];
  const s = split.stamp;
  await store.exclusive(async () => {
    const c = store.connection;
    await c.run('BEGIN TRANSACTION');
    try {
      await c.run('UPDATE subject_split SET replaced_at = $1::TIMESTAMP WHERE replaced_at IS NULL', [s.madeAt]);
      await appendColumns(c, table('subject_split'), subjects.length, {
        split_id: () => s.id,
        subject: (i) => subjects[i],
        part: (i) => split.parts.get(subjects[i])!,
        seed: () => s.seed,
        fraction: () => s.fraction,
        stratify: () => JSON.stringify(s.stratify),
        blind_column: () => s.blindColumn,
        group_codes: () => (split.codes === null ? null : JSON.stringify(split.codes)),
        made_at: () => new Date(s.madeAt),
        replaced_at: () => null,
      });
      await c.run('COMMIT');
    } catch (e) {
      await c.run('ROLLBACK');
      throw e;
    }
  });
}

function planOf(r: Record<string, unknown>): StoredPlan {
  return { id: String(r.plan_id), hash: String(r.sha256), lockedAt: iso(r.locked_at), content: JSON.parse(String(r.plan)) as PlanContent };
}

export async function readPlans(store: Store): Promise<StoredPlan[]> {
  if (!(await hasSplitTables(store))) return [];
  return (await rows(store, 'SELECT * FROM analysis_plans ORDER BY locked_at, plan_id')).map(planOf);
}

export async function readPlan(store: Store, id: string): Promise<StoredPlan | null> {
  if (!(await hasSplitTables(store))) return null;
  const r = await rows(store, 'SELECT * FROM analysis_plans WHERE plan_id = $1', [id]);
  return r.length > 0 ? planOf(r[0]) : null;
}

/** Stores a plan (its JSON is the canonical text the hash was taken of). */
export async function insertPlan(store: Store, plan: StoredPlan, canonical: string): Promise<void> {
  const c: PlanContent = plan.content;
  await store.exclusive(async () => {
    await store.connection.run(
      'INSERT INTO analysis_plans (plan_id, sha256, locked_at, split_id, run_id, contrasts, exclusions, plan) VALUES ($1, $2, $3::TIMESTAMP, $4, $5, $6, $7, $8)',
      [plan.id, plan.hash, plan.lockedAt, c.split.id, c.runId, JSON.stringify(c.contrasts), JSON.stringify(c.exclusions), canonical],
    );
  });
}

export async function readConfirmations(store: Store): Promise<StoredConfirmation[]> {
  if (!(await hasSplitTables(store))) return [];
  const r = await rows(store, 'SELECT * FROM plan_confirmations ORDER BY confirmed_at, plan_id, confirmation_run');
  return r.map((x) => ({ planId: String(x.plan_id), run: Number(x.confirmation_run), time: iso(x.confirmed_at) }));
}

/** Records a confirmation of a plan and returns its number (1 for the first). */
export async function insertConfirmation(store: Store, planId: string, time: string): Promise<number> {
  return store.exclusive(async () => {
    const c = store.connection;
    await c.run('BEGIN TRANSACTION');
    try {
      const r = (
        await c.runAndReadAll('SELECT coalesce(max(confirmation_run), 0) + 1 AS next FROM plan_confirmations WHERE plan_id = $1', [planId])
      ).getRowObjectsJS();
      const run = Number(r[0].next);
      await c.run('INSERT INTO plan_confirmations (plan_id, confirmation_run, confirmed_at) VALUES ($1, $2, $3::TIMESTAMP)', [planId, run, time]);
      await c.run('COMMIT');
      return run;
    } catch (e) {
      await c.run('ROLLBACK');
      throw e;
    }
  });
}
