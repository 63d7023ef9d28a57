// The open database, shared by every view.
import { openPickedFile, openServedDatabase, preloadEngine, type CohortConnection } from './db/connection.ts';
import { cohortSchema, runs, type CohortSchema, type RunInfo } from './db/queries.ts';

/** Where the dashboard server puts the database, relative to the app (ingest/server/serve.ts). */
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
      const schema = await cohortSchema(db);
      schema.require('runs', 'run_id', 'parameters');
      this.runs = await runs(db);
      performance.mark('bandwise:database-open');
      this.schema = schema;
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
}

export const session = new Session();
