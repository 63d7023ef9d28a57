// The tables and columns of the attached cohort database (ingest/store/schema.ts writes them),
// so readers can leave out what an older file lacks and say plainly what is missing.
import { COHORT, literal, texts, type SqlClient } from './client.ts';

export interface TableColumn {
  name: string;
  /** DuckDB type name, e.g. INTEGER, VARCHAR, FLOAT[] */
  type: string;
}

/** Tables of the attached database and their columns, in table order. */
export class CohortSchema {
  constructor(readonly tables: ReadonlyMap<string, readonly TableColumn[]>) {}

  has(table: string, ...columns: string[]): boolean {
    const cols = this.tables.get(table);
    if (cols === undefined) return false;
    return columns.every((c) => cols.some((x) => x.name === c));
  }

  columns(table: string): readonly TableColumn[] {
    return this.tables.get(table) ?? [];
  }

  /** Fail loudly when a table the app needs is missing. */
  require(table: string, ...columns: string[]): void {
    if (!this.has(table, ...columns)) {
      throw new Error(`database has no table ${table}(${columns.join(', ')}); is this a bandwise database?`);
    }
  }
}

export async function cohortSchema(db: SqlClient): Promise<CohortSchema> {
  const t = await db.query(
    `SELECT table_name::VARCHAR AS table_name, column_name::VARCHAR AS column_name, data_type::VARCHAR AS data_type FROM duckdb_columns()
     WHERE database_name = ${literal(COHORT)} AND schema_name = 'main'
     ORDER BY table_name, column_index`,
  );
  const tables = new Map<string, TableColumn[]>();
  const names = texts(t, 'table_name');
  const cols = texts(t, 'column_name');
  const types = texts(t, 'data_type');
  for (let i = 0; i < names.length; i++) {
    let list = tables.get(names[i]);
    if (list === undefined) tables.set(names[i], (list = []));
    list.push({ name: cols[i], type: types[i] });
  }
  return new CohortSchema(tables);
}

/** Participants columns that can define groups (text or boolean columns other than subject). */
export function groupingColumns(schema: CohortSchema): string[] {
  return schema
    .columns('participants')
    .filter((c) => c.name !== 'subject' && (c.type === 'VARCHAR' || c.type === 'BOOLEAN' || c.type.startsWith('ENUM')))
    .map((c) => c.name);
}
