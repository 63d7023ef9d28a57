// Named queries of the cohort view: participants, group sizes, the recordings with their sleep
// architecture, the inputs that failed.
import { COHORT, ident, literal, numbers, rowsOf, texts, type Row, type SqlClient } from './client.ts';
import type { CohortSchema, TableColumn } from './schema.ts';

const NUMERIC_TYPE = /^(TINYINT|SMALLINT|INTEGER|BIGINT|HUGEINT|UTINYINT|USMALLINT|UINTEGER|UBIGINT|FLOAT|DOUBLE|DECIMAL)/;

/** The participants table as given, numbers as numbers, everything else as text. */
export async function participants(db: SqlClient, schema: CohortSchema): Promise<{ columns: TableColumn[]; rows: Row[] }> {
  schema.require('participants', 'subject');
  const columns = [...schema.columns('participants')];
  const select = columns.map((c) => {
    const q = ident(c.name);
    if (c.type === 'BOOLEAN') return q;
    return NUMERIC_TYPE.test(c.type) ? `${q}::DOUBLE AS ${q}` : `${q}::VARCHAR AS ${q}`;
  });
  const rows = rowsOf(await db.query(`SELECT ${select.join(', ')} FROM ${COHORT}.participants ORDER BY subject`));
  return { columns, rows };
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
  const groups = texts(t, 'grp');
  const subjects = numbers(t, 'subjects');
  const recordings = numbers(t, 'recordings');
  const withSpectra = numbers(t, 'with_spectra');
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
    ctes.push(`fs AS (SELECT recording_id, min(fs_hz) AS lo, max(fs_hz) AS hi, count(*)::DOUBLE AS n FROM ${COHORT}.channels GROUP BY recording_id)`);
    select.push(`CASE WHEN fs.lo = fs.hi THEN printf('%g', fs.lo) ELSE printf('%g–%g', fs.lo, fs.hi) END AS fs_hz`, 'fs.n AS n_channels');
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
  return rowsOf(await db.query(sql));
}

/** Inputs that failed during ingest (empty when the table is absent). */
export async function ingestErrors(db: SqlClient, schema: CohortSchema): Promise<Row[]> {
  if (!schema.has('ingest_errors', 'file', 'message')) return [];
  const cols = ['run_id', 'file', 'step', 'field', 'message'].filter((c) => schema.has('ingest_errors', c));
  return rowsOf(
    await db.query(
      `SELECT ${cols.map((c) => `${ident(c)}::VARCHAR AS ${ident(c)}`).join(', ')} FROM ${COHORT}.ingest_errors ORDER BY ${cols.map(ident).join(', ')}`,
    ),
  );
}

/** The tidy_sleep_architecture columns a cohort table summarises per subject. */
export const SLEEP_COLUMNS = ['tst_min', 'se_pct', 'w_min', 'n1_min', 'n2_min', 'n3_min', 'r_min', 'clean_n2_min'] as const;

/**
 * Sleep architecture per subject of a run (mean over the subject's recordings), from the
 * tidy_sleep_architecture view (ingest/store/views.ts); null when the database has no tidy views
 * (written by an earlier bandwise).
 */
export async function sleepArchitectureBySubject(db: SqlClient, runId: string): Promise<Map<string, Record<string, number | null>> | null> {
  const views = rowsOf(
    await db.query(`SELECT count(*)::DOUBLE AS n FROM duckdb_views() WHERE database_name = ${literal(COHORT)} AND view_name = 'tidy_sleep_architecture'`),
  );
  if (Number(views[0].n) === 0) return null;
  const rows = rowsOf(
    await db.query(
      `SELECT subject::VARCHAR AS subject, ${SLEEP_COLUMNS.map((c) => `avg(${c})::DOUBLE AS ${c}`).join(', ')}
       FROM ${COHORT}.tidy_sleep_architecture WHERE run_id = ${literal(runId)} GROUP BY subject ORDER BY subject`,
    ),
  );
  return new Map(rows.map((r) => [String(r.subject), Object.fromEntries(SLEEP_COLUMNS.map((c) => [c, r[c] === null ? null : Number(r[c])]))]));
}
