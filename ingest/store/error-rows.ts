/**
 * The ingest_errors rows of a store: failures appended in batches (one append, not one write per
 * failure), each failure recorded once per run — a rerun that fails the same row again, with the
 * same file, step, field and message, adds nothing. The failures already recorded for a run are
 * read once and remembered as 44-byte keys.
 */
import { createHash } from 'node:crypto';
import type { DuckDBConnection } from '@duckdb/node-api';
import { appendColumns } from './chunks.ts';
import { tableDef } from './schema.ts';

export interface IngestErrorIn {
  runId: string;
  file: string | null;
  step: string;
  field: string | null;
  message: string;
}

/** SHA-256 (base64) of a failure's fields: its key among the run's recorded failures. */
function errorKey(e: Omit<IngestErrorIn, 'runId'>): string {
  return createHash('sha256')
    .update(JSON.stringify([e.file, e.step, e.field, e.message]))
    .digest('base64');
}

export class ErrorRows {
  private readonly recorded = new Map<string, Set<string>>();

  constructor(private readonly connection: DuckDBConnection) {}

  /** Appends the failures not yet recorded for their run; returns how many were added. Call inside the store's queue. */
  async write(errors: readonly IngestErrorIn[]): Promise<number> {
    const fresh: IngestErrorIn[] = [];
    for (const e of errors) {
      const known = await this.keysOf(e.runId);
      const key = errorKey(e);
      if (known.has(key)) continue;
      known.add(key);
      fresh.push(e);
    }
    const now = new Date();
    await appendColumns(this.connection, tableDef('ingest_errors'), fresh.length, {
      run_id: (i) => fresh[i].runId,
      file: (i) => fresh[i].file,
      step: (i) => fresh[i].step,
      field: (i) => fresh[i].field,
      message: (i) => fresh[i].message,
      logged_at: () => now,
    });
    return fresh.length;
  }

  private async keysOf(runId: string): Promise<Set<string>> {
    let keys = this.recorded.get(runId);
    if (!keys) {
      const reader = await this.connection.runAndReadAll('SELECT file, step, field, message FROM ingest_errors WHERE run_id = $1', [runId]);
      keys = new Set(
        reader.getRowObjectsJS().map((r) =>
          errorKey({
            file: r.file === null ? null : String(r.file),
            step: String(r.step),
            field: r.field === null ? null : String(r.field),
            message: String(r.message),
          }),
        ),
      );
      this.recorded.set(runId, keys);
    }
    return keys;
  }
}
