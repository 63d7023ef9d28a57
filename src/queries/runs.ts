// The ingest runs of the database, and which one an analysis reads.
import { COHORT, rowsOf, type SqlClient } from './client.ts';
import { ContrastDataError } from '../core/contrast/data-error.ts';

export interface RunInfo {
  runId: string;
  toolVersion: string;
  /** The run's parameters JSON, parsed. */
  parameters: Record<string, unknown>;
  /** as DuckDB writes a TIMESTAMP as text (UTC, e.g. 2026-01-05 09:00:00) */
  startedAt: string | null;
  finishedAt: string | null;
  shard: string | null;
}

/** Every run, oldest first. */
export async function runs(db: SqlClient): Promise<RunInfo[]> {
  const rows = rowsOf(
    await db.query(
      `SELECT run_id::VARCHAR AS run_id, tool_version::VARCHAR AS tool_version, parameters::VARCHAR AS parameters,
              started_at::VARCHAR AS started_at, finished_at::VARCHAR AS finished_at, shard::VARCHAR AS shard
       FROM ${COHORT}.runs ORDER BY started_at, run_id`,
    ),
  );
  return rows.map((r) => {
    let parameters: unknown;
    try {
      parameters = JSON.parse(String(r.parameters ?? 'null'));
    } catch {
      throw new Error(`runs.parameters of run ${r.run_id} is not valid JSON`);
    }
    if (parameters === null || typeof parameters !== 'object' || Array.isArray(parameters)) {
      throw new Error(`runs.parameters of run ${r.run_id} is not a JSON object`);
    }
    return {
      runId: String(r.run_id),
      toolVersion: String(r.tool_version ?? ''),
      parameters: parameters as Record<string, unknown>,
      startedAt: r.started_at === null ? null : String(r.started_at),
      finishedAt: r.finished_at === null ? null : String(r.finished_at),
      shard: r.shard === null ? null : String(r.shard),
    };
  });
}

/** The run an analysis reads: the one named (finished or not), else the most recent finished one. */
export function chooseRun(runList: readonly RunInfo[], runId?: string): RunInfo {
  if (runList.length === 0) throw new Error('the database holds no ingest run');
  if (runId === undefined) {
    // an unfinished run (interrupted, or still being written) is read only when named: its cohort may be partial
    const finished = [...runList].reverse().find((r) => r.finishedAt !== null);
    if (finished) return finished;
    const last = runList[runList.length - 1].runId;
    throw new ContrastDataError(
      `the database holds no finished ingest run: run ${last} stopped before its end. Rerun the same ingest to finish it, or name the run with --run ${last} to analyse what it stored`,
    );
  }
  const named = runList.find((r) => r.runId === runId);
  if (!named) throw new Error(`no run ${runId} in the database (runs: ${runList.map((r) => r.runId).join(', ')})`);
  return named;
}
