// The open database, shared by every view.
import { openPickedFile, openServedDatabase, preloadEngine, type CohortConnection } from './db/connection.ts';
import type { ReportableResult } from '../core/report/index.ts';
import { runs, type RunInfo } from '../queries/runs.ts';
import { cohortSchema, type CohortSchema } from '../queries/schema.ts';

/** Where the dashboard server puts the database, relative to the app (src/server/serve.ts). */
export const SERVED_DATABASE = 'data/cohort.duckdb';

export type SessionStatus = 'idle' | 'opening' | 'ready' | 'failed';

export class Session {
  status: SessionStatus = $state('idle');
  error: string | null = $state(null);
  db: CohortConnection | null = $state.raw(null);
  schema: CohortSchema | null = $state.raw(null);
  runs: RunInfo[] = $state.raw([]);
  /** Bumped on every open, so views reload their data. */
  generation = $state(0);

  /** Open the database served beside the app, if there is one; otherwise stay idle. */
  async openServedIfPresent(): Promise<void> {
    preloadEngine();
    let served = false;
    try {
      served = (await fetch(SERVED_DATABASE, { method: 'HEAD', cache: 'no-store' })).ok;
    } catch {
      served = false;
    }
    if (served) await this.open(() => openServedDatabase(SERVED_DATABASE));
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
      performance.mark('bandwise:database-open');
      this.schema = schema.value;
      this.db = db;
      this.generation++;
      this.status = 'ready';
    } catch (err) {
      this.db = null;
      this.schema = null;
      this.runs = [];
      this.error = err instanceof Error ? err.message : String(err);
      this.status = 'failed';
    }
  }

  /** What a result records of the database it ran on (the methods report's database line): the file name, not its path. */
  resultDatabase(runId: string): NonNullable<ReportableResult['database']> {
    const run = this.runs.find((r) => r.runId === runId);
    return { file: (this.db?.source ?? 'database').split('/').pop()!, runId, toolVersion: run?.toolVersion ?? '', ingestParameters: run?.parameters ?? null };
  }
}

export const session = new Session();
