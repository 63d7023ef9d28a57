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
