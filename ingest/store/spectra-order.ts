/**
 * Stores the spectra table in (stage, reference, averaging, estimator, recording_id, channel) order, so a
 * reader that asks for one stage × reference × averaging × estimator touches only the row groups holding it:
 * DuckDB keeps min/max per column and row group (zone maps) and skips the others. The dashboard
 * reads the database over HTTP range requests, so skipped row groups are bytes never sent
 * (2,000 recordings × 64 channels × 5 stages, one stage read: 549 → 148 MB).
 *
 * Same table, same columns, same primary key: the sorted rows go into a new table created from
 * schema.ts, which then replaces `spectra`, all in one transaction (an interrupted sort leaves the
 * old table as it was). A table already in order (checked on the key columns only) is left alone,
 * so a rerun that wrote nothing costs one scan of the keys. Called at the end of an ingest (a
 * resumed run's rows are sorted in then), of a merge and of the synthetic generator.
 *
 * Cost: the rewritten table is written after the old one and the old one's blocks stay in the file
 * as free blocks that later writes reuse (DuckDB truncates only free blocks at the end of a file).
 */
import type { Store } from './writer.ts';
import { createTableSql, quoteIdent, tableDef } from './schema.ts';

/** The stored order of spectra rows. */
export const SPECTRA_ORDER = ['stage', 'reference', 'averaging', 'estimator', 'recording_id', 'channel'] as const;

const SORTING_TABLE = 'spectra_sorting';

/** Rewrites spectra in SPECTRA_ORDER unless it is in that order already; returns whether it rewrote. */
export async function sortSpectra(store: Store): Promise<boolean> {
  return store.exclusive(async () => {
    const c = store.connection;
    const keys = SPECTRA_ORDER.map(quoteIdent).join(', ');
    // rows out of order: a row whose key is below the previous row's key in storage (rowid) order
    const check = await c.runAndReadAll(
      `SELECT count(*)::DOUBLE AS n FROM (SELECT (${keys}) < lag((${keys})) OVER (ORDER BY rowid) AS down FROM spectra) WHERE down`,
    );
    if (Number(check.getRowObjectsJS()[0].n) === 0) return false;
    const def = tableDef('spectra');
    const columns = def.columns.map((col) => quoteIdent(col.name)).join(', ');
    // one thread writes the sorted rows: parallel writers interleave their row groups' blocks in
    // the file, and a reader over HTTP (duckdb-wasm) then needs one range request per block
    // instead of one per run of adjacent blocks (one stage of 2,000 × 64: 632 vs 90 requests)
    const threads = (await c.runAndReadAll(`SELECT current_setting('threads')::INTEGER AS n`)).getRowObjectsJS()[0].n;
    await c.run('SET threads = 1');
    await c.run('BEGIN TRANSACTION');
    try {
      await c.run(createTableSql({ ...def, name: SORTING_TABLE }).replace('IF NOT EXISTS ', ''));
      await c.run(`INSERT INTO ${SORTING_TABLE} (${columns}) SELECT ${columns} FROM spectra ORDER BY ${keys}`);
      await c.run('DROP TABLE spectra');
      await c.run(`ALTER TABLE ${SORTING_TABLE} RENAME TO spectra`);
      await c.run('COMMIT');
    } catch (error) {
      // a COMMIT that failed (disk full) has already ended the transaction: report the first error
      await c.run('ROLLBACK').catch(() => undefined);
      throw error;
    } finally {
      await c.run(`SET threads = ${Number(threads)}`);
    }
    await c.run('CHECKPOINT');
    return true;
  });
}
