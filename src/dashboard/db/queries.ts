// Named queries over the cohort database (tables of DESIGN.md, attached as `cohort`).
// Results are plain arrays of rows; big numeric results are typed arrays.
import { listColumnToMatrix, numberColumn, stringColumn, tableToRows, type Row } from './arrow-rows.ts';
import { COHORT, ident, literal, type SqlClient } from './sql-client.ts';
import { estimatorCondition } from './estimator.ts';


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
    `SELECT table_name, column_name, data_type FROM duckdb_columns()
     WHERE database_name = ${literal(COHORT)} AND schema_name = 'main'
     ORDER BY table_name, column_index`,
  );
  const tables = new Map<string, TableColumn[]>();
  const names = stringColumn(t, 'table_name');
  const cols = stringColumn(t, 'column_name');
  const types = stringColumn(t, 'data_type');
  for (let i = 0; i < names.length; i++) {
    let list = tables.get(names[i]);
    if (list === undefined) tables.set(names[i], (list = []));
    list.push({ name: cols[i], type: types[i] });
  }
  return new CohortSchema(tables);
}

export interface RunInfo {
  runId: string;
  toolVersion: string;
  /** The run's parameters JSON, parsed. */
  parameters: Record<string, unknown>;
  startedAt: string | null;
  finishedAt: string | null;
  shard: string | null;
}

export async function runs(db: SqlClient): Promise<RunInfo[]> {
  const rows = tableToRows(
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

const NUMERIC_TYPE = /^(TINYINT|SMALLINT|INTEGER|BIGINT|HUGEINT|UTINYINT|USMALLINT|UINTEGER|UBIGINT|FLOAT|DOUBLE|DECIMAL)/;

/** The participants table as given, numbers as numbers, everything else as text. */
export async function participants(
  db: SqlClient,
  schema: CohortSchema,
): Promise<{ columns: TableColumn[]; rows: Row[] }> {
  schema.require('participants', 'subject');
  const columns = [...schema.columns('participants')];
  const select = columns.map((c) => {
    const q = ident(c.name);
    if (c.type === 'BOOLEAN') return q;
    return NUMERIC_TYPE.test(c.type) ? `${q}::DOUBLE AS ${q}` : `${q}::VARCHAR AS ${q}`;
  });
  const rows = tableToRows(await db.query(`SELECT ${select.join(', ')} FROM ${COHORT}.participants ORDER BY subject`));
  return { columns, rows };
}

/** Participants columns that can define groups (text or boolean columns other than subject). */
export function groupingColumns(schema: CohortSchema): string[] {
  return schema
    .columns('participants')
    .filter((c) => c.name !== 'subject' && (c.type === 'VARCHAR' || c.type === 'BOOLEAN' || c.type.startsWith('ENUM')))
    .map((c) => c.name);
}

export interface GroupSize {
  group: string;
  subjects: number;
  recordings: number;
  /** Recordings with at least one row in spectra. */
  withSpectra: number;
}

/** Label for participants whose grouping value is missing. */
export const NO_GROUP = '(no value)';

/** Subjects and recordings per value of `groupColumn` (a participants column), or one line for all. */
export async function groupSizes(db: SqlClient, schema: CohortSchema, groupColumn: string | null): Promise<GroupSize[]> {
  schema.require('participants', 'subject');
  schema.require('recordings', 'recording_id', 'subject');
  if (groupColumn !== null && !schema.has('participants', groupColumn)) {
    throw new Error(`participants has no column ${JSON.stringify(groupColumn)}`);
  }
  const grp = groupColumn === null ? `'all'` : `coalesce(${ident(groupColumn)}::VARCHAR, ${literal(NO_GROUP)})`;
  const spectra = schema.has('spectra', 'recording_id')
    ? `SELECT DISTINCT recording_id FROM ${COHORT}.spectra`
    : `SELECT NULL::INTEGER AS recording_id WHERE false`;
  const t = await db.query(
    `WITH p AS (SELECT DISTINCT subject, ${grp} AS grp FROM ${COHORT}.participants),
          s AS (${spectra})
     SELECT p.grp AS grp, count(DISTINCT p.subject)::DOUBLE AS subjects,
            count(r.recording_id)::DOUBLE AS recordings, count(s.recording_id)::DOUBLE AS with_spectra
     FROM p LEFT JOIN ${COHORT}.recordings r ON r.subject = p.subject
            LEFT JOIN s ON s.recording_id = r.recording_id
     GROUP BY p.grp ORDER BY p.grp`,
  );
  const groups = stringColumn(t, 'grp');
  const subjects = numberColumn(t, 'subjects');
  const recordings = numberColumn(t, 'recordings');
  const withSpectra = numberColumn(t, 'with_spectra');
  return groups.map((group, i) => ({
    group,
    subjects: subjects[i],
    recordings: recordings[i],
    withSpectra: withSpectra[i],
  }));
}

/** Sleep architecture columns of recordings (written by ingest with src/core/hypnogram), shown when present. */
export const ARCHITECTURE_COLUMNS = [
  'w_min',
  'n1_min',
  'n2_min',
  'n3_min',
  'r_min',
  'unscored_min',
  'tst_min',
  'se_pct',
  'sol_min',
  'rem_latency_min',
  'waso_min',
] as const;

/** Stage minutes shown also as a share of total sleep time (%), when both are stored. */
const STAGE_SHARE = [
  ['n1_min', 'n1_pct'],
  ['n2_min', 'n2_pct'],
  ['n3_min', 'n3_pct'],
  ['r_min', 'r_pct'],
] as const;

/**
 * One row per recording: group (when `groupColumn` is given), file, status, duration, sampling
 * rate and channel count (from channels), minutes per stage and sleep architecture as stored by
 * ingest (only the columns the database has), stage shares in % of total sleep time.
 */
export async function recordingsOverview(db: SqlClient, schema: CohortSchema, groupColumn: string | null): Promise<Row[]> {
  schema.require('recordings', 'recording_id', 'subject');
  const withGroup = groupColumn !== null && schema.has('participants', 'subject', groupColumn);
  const withChannels = schema.has('channels', 'recording_id', 'fs_hz');
  const ctes: string[] = [];
  const joins: string[] = [];
  const select = [
    'r.recording_id::VARCHAR AS recording_id',
    'r.subject::VARCHAR AS subject',
    ...(schema.has('recordings', 'session') ? ['r.session::VARCHAR AS session'] : []),
    ...(withGroup ? [`coalesce(p.grp, ${literal(NO_GROUP)}) AS "group"`] : []),
    ...(schema.has('recordings', 'file_name') ? ['r.file_name::VARCHAR AS file_name'] : []),
    ...(schema.has('recordings', 'status') ? ['r.status::VARCHAR AS status'] : []),
    ...(schema.has('recordings', 'duration_s') ? ['r.duration_s::DOUBLE / 60 AS duration_min'] : []),
  ];
  if (withGroup) {
    ctes.push(`p AS (SELECT subject, any_value(${ident(groupColumn)}::VARCHAR) AS grp FROM ${COHORT}.participants GROUP BY subject)`);
    joins.push('LEFT JOIN p ON p.subject = r.subject');
  }
  if (withChannels) {
    ctes.push(
      `fs AS (SELECT recording_id, min(fs_hz) AS lo, max(fs_hz) AS hi, count(*)::DOUBLE AS n FROM ${COHORT}.channels GROUP BY recording_id)`,
    );
    select.push(
      `CASE WHEN fs.lo = fs.hi THEN printf('%g', fs.lo) ELSE printf('%g–%g', fs.lo, fs.hi) END AS fs_hz`,
      'fs.n AS n_channels',
    );
    joins.push('LEFT JOIN fs ON fs.recording_id = r.recording_id');
  }
  for (const c of ARCHITECTURE_COLUMNS) if (schema.has('recordings', c)) select.push(`r.${c}::DOUBLE AS ${c}`);
  if (schema.has('recordings', 'tst_min')) {
    for (const [minutes, share] of STAGE_SHARE) {
      if (schema.has('recordings', minutes)) select.push(`100 * r.${minutes} / nullif(r.tst_min, 0) AS ${share}`);
    }
  }
  const sql =
    (ctes.length > 0 ? `WITH ${ctes.join(',\n')}\n` : '') +
    `SELECT ${select.join(', ')} FROM ${COHORT}.recordings r ${joins.join(' ')} ORDER BY r.subject, r.recording_id`;
  return tableToRows(await db.query(sql));
}

/** Inputs that failed during ingest (empty when the table is absent). */
export async function ingestErrors(db: SqlClient, schema: CohortSchema): Promise<Row[]> {
  if (!schema.has('ingest_errors', 'file', 'message')) return [];
  const cols = ['run_id', 'file', 'step', 'field', 'message'].filter((c) => schema.has('ingest_errors', c));
  return tableToRows(
    await db.query(
      `SELECT ${cols.map((c) => `${ident(c)}::VARCHAR AS ${ident(c)}`).join(', ')} FROM ${COHORT}.ingest_errors ORDER BY ${cols.map(ident).join(', ')}`,
    ),
  );
}

export interface SpectraSelection {
  stage: string;
  reference: string;
  averaging: string;
  /** default welch; null: a database without the estimator column (estimator.ts) */
  estimator?: string | null;
}

/** Spectra of one stage/reference/averaging, rows ordered by recording then channel. */
export interface SpectraMatrix {
  recordingIds: string[];
  channels: string[];
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  /** rows × nBins, row-major, µV²/Hz */
  power: Float32Array;
}

export async function spectraMatrix(db: SqlClient, sel: SpectraSelection): Promise<SpectraMatrix> {
  const t = await db.query(
    `SELECT recording_id::VARCHAR AS recording_id, channel::VARCHAR AS channel, freq_start_hz::DOUBLE AS f0,
            freq_step_hz::DOUBLE AS df, n_bins::DOUBLE AS n_bins, power
     FROM ${COHORT}.spectra
     WHERE stage = ${literal(sel.stage)} AND reference = ${literal(sel.reference)} AND averaging = ${literal(sel.averaging)}${estimatorCondition('estimator', sel.estimator)}
     ORDER BY recording_id, channel`,
  );
  const f0 = numberColumn(t, 'f0');
  const df = numberColumn(t, 'df');
  const nb = numberColumn(t, 'n_bins');
  for (let i = 1; i < t.numRows; i++) {
    if (f0[i] !== f0[0] || df[i] !== df[0] || nb[i] !== nb[0]) {
      throw new Error(
        `spectra rows of ${sel.stage}/${sel.reference}/${sel.averaging} have different frequency grids (row ${i}: start ${f0[i]} Hz, step ${df[i]} Hz, ${nb[i]} bins)`,
      );
    }
  }
  const nBins = t.numRows > 0 ? nb[0] : 0;
  return {
    recordingIds: stringColumn(t, 'recording_id'),
    channels: stringColumn(t, 'channel'),
    freqStartHz: t.numRows > 0 ? f0[0] : 0,
    freqStepHz: t.numRows > 0 ? df[0] : 0,
    nBins,
    power: listColumnToMatrix(t, 'power', nBins),
  };
}
