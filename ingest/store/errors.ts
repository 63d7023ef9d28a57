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

/** True when DuckDB or the operating system reports a full disk (ENOSPC, "No space left on device"). */
export function isDiskFull(e: unknown): boolean {
  if (typeof e === 'object' && e !== null && (e as { code?: unknown }).code === 'ENOSPC') return true;
  const text = e instanceof Error ? e.message : String(e);
  return /No space left on device|ENOSPC|disk (is )?full/i.test(text);
}

/** The disk holding the database filled up: the run stops; what was committed before is kept. */
export class DiskFullError extends StoreError {
  constructor(database: string, during: string, stored: number, cause: unknown) {
    const first = (cause instanceof Error ? cause.message : String(cause)).split('\n')[0];
    super(
      `the disk holding ${database} is full (${first.replace(/^.*?(No space left on device).*$/i, '$1')}) while ${during}; the run stopped. ` +
        `The ${stored} recording${stored === 1 ? '' : 's'} of this run stored before ${stored === 1 ? 'is' : 'are'} kept; ` +
        'free some space and rerun the same command: recordings already stored are skipped.',
    );
    this.name = 'DiskFullError';
  }
}
