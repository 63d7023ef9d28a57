/** A value or state the store refuses, naming where it was found. */
export class StoreError extends Error {
  readonly table: string | null;
  readonly column: string | null;
  readonly row: number | null;

  constructor(message: string, where: { table?: string; column?: string; row?: number } = {}) {
    const place = [
      where.table !== undefined ? `table ${where.table}` : null,
      where.column !== undefined ? `column ${where.column}` : null,
      where.row !== undefined ? `row ${where.row}` : null,
    ].filter((p) => p !== null);
    super(place.length > 0 ? `${place.join(', ')}: ${message}` : message);
    this.name = 'StoreError';
    this.table = where.table ?? null;
    this.column = where.column ?? null;
    this.row = where.row ?? null;
  }
}

/**
 * True when DuckDB or the operating system reports no room to write: a full disk (ENOSPC, "No
 * space left on device") or a file size limit reached (EFBIG, "File too large", e.g. ulimit -f).
 */
export function isDiskFull(e: unknown): boolean {
  return noRoomReason(e) !== null;
}

function noRoomReason(e: unknown): string | null {
  const code = typeof e === 'object' && e !== null ? (e as { code?: unknown }).code : undefined;
  const text = e instanceof Error ? e.message : String(e);
  if (code === 'ENOSPC' || /No space left on device|ENOSPC/i.test(text)) return 'no space left on the device';
  if (code === 'EFBIG' || /File too large|EFBIG/i.test(text)) return 'the file size limit was reached';
  return null;
}

/** No room to write the database (disk full, file size limit): the run stops; what was committed before is kept. */
export class DiskFullError extends StoreError {
  constructor(database: string, during: string, stored: number, cause: unknown) {
    super(
      `no room to write ${database}: ${noRoomReason(cause) ?? 'the disk is full'} while ${during}; the run stopped. ` +
        `The ${stored} recording${stored === 1 ? '' : 's'} of this run stored before ${stored === 1 ? 'is' : 'are'} kept; ` +
        'free some space and rerun the same command: recordings already stored are skipped.',
    );
    this.name = 'DiskFullError';
  }
}

/**
 * Another process holds the database file's lock. DuckDB (documentation, "Concurrency") lets one
 * process open a file for writing, and then no other process may open it at all; several
 * processes may read a file together when none writes.
 */
export class DatabaseBusyError extends StoreError {
  /** The explained error for DuckDB's "Could not set lock on file" failure, or null for any other error. */
  static from(database: string, readOnly: boolean, cause: unknown): DatabaseBusyError | null {
    const text = cause instanceof Error ? cause.message : String(cause);
    if (!/Could not set lock on file/i.test(text)) return null;
    const pid = /\(PID (\d+)\)/.exec(text)?.[1];
    const holder = pid ? `another process (PID ${pid})` : 'another process';
    return new DatabaseBusyError(
      readOnly
        ? `${database} is open for writing by ${holder}, e.g. a bandwise ingest or merge still running. ` +
            'A DuckDB database that one process writes cannot be read by any other until the writer has finished; ' +
            'wait for it to end, then run this again (or read another, finished database).'
        : `${database} is in use by ${holder}: another bandwise ingest or merge writing it, or a reader (compare, band-check, ` +
            'report, Python, R) holding it open. DuckDB lets only one process write a database, with no other process ' +
            'reading it meanwhile; wait until that process has finished, or write to another file.',
    );
  }

  private constructor(message: string) {
    super(message);
    this.name = 'DatabaseBusyError';
  }
}
