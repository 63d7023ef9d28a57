// The identity of the data an analysis reads (src/core/report/ledger.ts dataIdentity): the ingest
// run and its recordings, so the ledger of the browser and of the command line name the same data alike.
import { dataIdentity } from '../core/report/ledger.ts';
import { COHORT, literal, rowsOf, type SqlClient } from './client.ts';

export async function runDataIdentity(db: SqlClient, runId: string): Promise<string> {
  const rows = rowsOf(await db.query(`SELECT recording_id::VARCHAR AS id FROM ${COHORT}.recordings WHERE run_id = ${literal(runId)}`));
  return dataIdentity(
    runId,
    rows.map((r) => String(r.id)),
  );
}
