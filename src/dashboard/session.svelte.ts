// The open database, shared by every view.
import { openPickedFile, openServedDatabase, preloadEngine, type CohortConnection } from './db/connection.ts';
import type { ReportableResult } from '../core/report/index.ts';
import { servedDatabaseName } from './db/served-name.ts';
import { runs, type RunInfo } from '../queries/runs.ts';
import { cohortSchema, type CohortSchema } from '../queries/schema.ts';
import { NO_WORKFLOW, workflowOf, type WorkflowState } from '../queries/workflow.ts';

/** Where the dashboard server puts the database, relative to the app (src/server/serve.ts). */
export const SERVED_DATABASE = 'data/cohort.duckdb';

export type SessionStatus = 'idle' | 'opening' | 'ready' | 'failed';

export class Session {
  status: SessionStatus = $state('idle');
  error: string | null = $state(null);
  db: CohortConnection | null = $state.raw(null);
  schema: CohortSchema | null = $state.raw(null);
  runs: RunInfo[] = $state.raw([]);
  /** the split, its exploration part (groups coded while blinded) and the plans; read before any view shows */
  workflow: WorkflowState = $state.raw(NO_WORKFLOW);
  /** Bumped on every open, so views reload their data. */
  generation = $state(0);

  /** Open the database served beside the app, if there is one; otherwise stay idle. */
  async openServedIfPresent(): Promise<void> {
    preloadEngine();
    let served: Response | null;
    try {
      served = await fetch(SERVED_DATABASE, { method: 'HEAD', cache: 'no-store' });
    } catch {
      served = null;
    }
    // the server names the file it serves (its real name, not the URL's)
    const name = served?.ok ? servedDatabaseName(served.headers.get('Content-Disposition')) : null;
    // read again (after a workflow step or a command in a terminal): a new address, so the engine
    // reads the file as it is now, not what it kept of the address it read before
    const url = this.generation === 0 ? SERVED_DATABASE : `${SERVED_DATABASE}?read=${this.generation}`;
    if (served?.ok) await this.open(() => openServedDatabase(url, name ?? undefined));
  }

  async openFile(file: File): Promise<void> {
    await this.open(() => openPickedFile(file));
  }

  private async open(connect: () => Promise<CohortConnection>): Promise<void> {
    this.status = 'opening';
    this.error = null;
    try {
      const db = await connect();
      // both reads issued together (one wait on the engine, not two); a database without a runs
      // table reports that, not the failed runs query
      const [schema, runList] = await Promise.allSettled([cohortSchema(db), runs(db)]);
      if (schema.status === 'rejected') throw schema.reason;
      schema.value.require('runs', 'run_id', 'parameters');
      if (runList.status === 'rejected') throw runList.reason;
      this.runs = runList.value;
      this.workflow = await workflowOf(db, schema.value);
      performance.mark('bandwise:database-open');
      this.schema = schema.value;
      this.db = db;
      this.generation++;
      this.status = 'ready';
    } catch (err) {
      this.db = null;
      this.schema = null;
      this.runs = [];
      this.workflow = NO_WORKFLOW;
      this.error = err instanceof Error ? err.message : String(err);
      this.status = 'failed';
    }
  }

  /** The open database's file name, not its path (as a command line would name it). */
  get databaseName(): string {
    return this.db?.name ?? 'cohort.duckdb';
  }

  /** What a result records of the database it ran on (the methods report's database line): the file name, not its path. */
  resultDatabase(runId: string): NonNullable<ReportableResult['database']> {
    const run = this.runs.find((r) => r.runId === runId);
    return { file: this.db ? this.databaseName : 'database', runId, toolVersion: run?.toolVersion ?? '', ingestParameters: run?.parameters ?? null };
  }
}

export const session = new Session();
