/**
 * Merging shard databases (`bandwise ingest --shard K/N` outputs) into one cohort database of
 * the same format as a single-process ingest.
 *
 * Rules:
 * - Every shard must hold the same runs (same parameters, hence the same run_id, and the same
 *   tool version), each finished. A mix is refused, naming the parameter keys that differ.
 * - Shard labels "K/N" must agree on N; missing shards are refused unless allowed.
 * - A recording_id found in more than one shard is kept once when its rows are identical in
 *   every table (timestamps aside) and refused when they differ.
 * - The output is created new (storage compatibility as openStore pins it, ≤ v1.4), every table
 *   copied by ATTACH … (READ_ONLY) and INSERT … SELECT, then the cohort-level quality pass runs
 *   (cohort-distance, which needs the whole cohort). The file is written under a temporary name
 *   and renamed at the end, so a failed merge leaves no half-written output.
 */
import { existsSync, realpathSync, renameSync, rmSync } from 'node:fs';
import path from 'node:path';
import type { DuckDBConnection, DuckDBValue } from '@duckdb/node-api';
import { cohortDistance, DEFAULT_COHORT_DISTANCE } from '../../src/core/quality/cohort-distance.ts';
import type { Stage } from '../../src/core/stages.ts';
import type { Reference } from './bundle.ts';
import { openStore, readHeaderStorageNumber } from './database.ts';
import { canonicalJson } from './identity.ts';
import { participantsCreateSql, quoteIdent, TABLES, type TableDef } from './schema.ts';
import { appendColumns } from './chunks.ts';
import { sortSpectra, SPECTRA_ORDER } from './spectra-order.ts';
import type { Store } from './writer.ts';

/** A merge that cannot be done, with the reason. */
export class MergeError extends Error {
  override name = 'MergeError';
}

export interface MergeOptions {
  /** Merge although some shards K/N are missing (default false: refused). */
  allowMissingShards?: boolean;
}

export interface MergeSummary {
  out: string;
  shards: number;
  runIds: string[];
  recordings: number;
  /** Recordings found identical in more than one shard and kept once. */
  duplicatesDropped: number;
  /** Shards "K/N" not among the inputs (only with allowMissingShards). */
  missingShards: string[];
  /** Rows of the cohort-level quality pass written. */
  cohortQualityRows: number;
}

/** Tables holding one recording's rows (all have recording_id). */
const RECORDING_TABLES = [
  'recordings',
  'channels',
  'epochs',
  'epoch_rejections',
  'spectra',
  'epoch_band_power',
  'epoch_spectra',
  'aperiodic',
  'peaks',
  'quality',
  'reference_skips',
  'warnings',
];

/** Columns that hold the time a row was written: they differ between runs and are not compared. */
const TIME_COLUMNS: Record<string, string[]> = {
  runs: ['started_at', 'finished_at'],
  recordings: ['ingested_at'],
  ingest_errors: ['logged_at'],
  warnings: ['logged_at'],
};

/** Quality metrics that depend on the whole cohort: recomputed after the merge, not copied. */
const COHORT_METRICS = ['cohort-distance'];

interface ShardRun {
  runId: string;
  toolVersion: string;
  parameters: string;
  finished: boolean;
  shard: string | null;
}

const sqlText = (s: string) => `'${s.replaceAll("'", "''")}'`;

async function rows(c: DuckDBConnection, sql: string, values: DuckDBValue[] = []): Promise<Record<string, unknown>[]> {
  return (await c.runAndReadAll(sql, values)).getRowObjectsJS();
}

/** Dotted paths of the parameters whose values differ between a and b (objects compared key by key). */
export function parameterDifferences(a: unknown, b: unknown, at = ''): string[] {
  const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
  if (isObject(a) && isObject(b)) {
    const keys = [...new Set([...Object.keys(a), ...Object.keys(b)])].sort();
    return keys.flatMap((k) => parameterDifferences(a[k], b[k], at ? `${at}.${k}` : k));
  }
  return canonicalJson(a ?? null) === canonicalJson(b ?? null) ? [] : [at || '(whole parameter set)'];
}

/** Merge shard databases into a new database file at outPath. */
export async function mergeShards(shardPaths: readonly string[], outPath: string, options: MergeOptions = {}): Promise<MergeSummary> {
  if (shardPaths.length === 0) throw new MergeError('no shard databases given');
  const out = path.resolve(outPath);
  if (existsSync(out)) throw new MergeError(`${outPath} exists already; merge writes a new file (remove it or choose another --out)`);
  const seen = new Map<string, string>();
  for (const p of shardPaths) {
    if (!existsSync(p)) throw new MergeError(`shard database not found: ${p}`);
    readHeaderStorageNumber(p); // throws unless it is a DuckDB file
    const real = realpathSync(p);
    if (seen.has(real)) throw new MergeError(`${p} is given twice (also as ${seen.get(real)})`);
    seen.set(real, p);
  }
  const partial = `${out}.merging`;
  rmSync(partial, { force: true });
  rmSync(`${partial}.wal`, { force: true });
  const store = await openStore(partial, { create: true });
  let summary: MergeSummary;
  try {
    summary = await mergeInto(store, shardPaths, options);
    summary.out = out;
    await store.close();
  } catch (error) {
    await store.close().catch(() => undefined);
    rmSync(partial, { force: true });
    rmSync(`${partial}.wal`, { force: true });
    throw error;
  }
  renameSync(partial, out);
  return summary;
}

async function mergeInto(store: Store, shardPaths: readonly string[], options: MergeOptions): Promise<MergeSummary> {
  return store
    .exclusive(async () => {
      const c = store.connection;
      const alias = shardPaths.map((_, i) => `shard${i}`);
      for (let i = 0; i < shardPaths.length; i++) {
        await c.run(`ATTACH ${sqlText(path.resolve(shardPaths[i]))} AS ${alias[i]} (READ_ONLY)`);
      }
      try {
        for (let i = 0; i < shardPaths.length; i++) await checkTables(c, alias[i], shardPaths[i]);
        const runs = await checkRuns(c, alias, shardPaths);
        const missingShards = checkShardLabels(runs, shardPaths, options.allowMissingShards ?? false);
        await copyRuns(
          c,
          alias,
          missingShards.length > 0
            ? [...new Set(runs.flat().map((r) => r.shard))]
                .filter((s) => s !== null)
                .sort()
                .join(',')
            : null,
        );
        await copyParticipants(c, alias, shardPaths);
        const duplicatesDropped = await copyRecordings(c, alias, shardPaths);
        await copyErrors(c, alias);
        const recordings = Number((await rows(c, 'SELECT count(*) AS n FROM recordings'))[0].n);
        return { out: '', shards: shardPaths.length, runIds: runs[0].map((r) => r.runId), recordings, duplicatesDropped, missingShards, cohortQualityRows: 0 };
      } finally {
        for (const a of alias) await c.run(`DETACH ${a}`);
      }
    })
    .then(async (summary) => {
      summary.cohortQualityRows = await cohortQualityPass(store);
      await sortSpectra(store); // a no-op check: the rows went in sorted
      return summary;
    });
}

/** Every fixed table of schema.ts, with every column, must be in the shard. */
async function checkTables(c: DuckDBConnection, alias: string, shown: string): Promise<void> {
  const found = await rows(c, 'SELECT table_name, column_name FROM duckdb_columns() WHERE database_name = $1', [alias]);
  const have = new Set(found.map((r) => `${String(r.table_name)}.${String(r.column_name)}`));
  for (const t of TABLES) {
    const missing = t.columns.filter((col) => !have.has(`${t.name}.${col.name}`)).map((col) => col.name);
    if (missing.length === t.columns.length) throw new MergeError(`${shown}: no table ${t.name}; is it a bandwise database?`);
    if (missing.length > 0) throw new MergeError(`${shown}: table ${t.name} lacks column(s) ${missing.join(', ')} (written by another bandwise version?)`);
  }
}

/** Same runs in every shard (parameters and tool version), each finished. Returns the runs per shard. */
async function checkRuns(c: DuckDBConnection, alias: string[], shown: readonly string[]): Promise<ShardRun[][]> {
  const perShard: ShardRun[][] = [];
  for (let i = 0; i < alias.length; i++) {
    const found = await rows(c, `SELECT run_id, tool_version, parameters, finished_at IS NOT NULL AS finished, shard FROM ${alias[i]}.runs ORDER BY run_id`);
    if (found.length === 0) throw new MergeError(`${shown[i]}: no runs; nothing was ingested into it`);
    perShard.push(
      found.map((r) => ({
        runId: String(r.run_id),
        toolVersion: String(r.tool_version),
        parameters: String(r.parameters),
        finished: Boolean(r.finished),
        shard: r.shard === null ? null : String(r.shard),
      })),
    );
  }
  const first = perShard[0];
  for (let i = 0; i < perShard.length; i++) {
    for (const run of perShard[i]) {
      if (!run.finished)
        throw new MergeError(`${shown[i]}: run ${run.runId} has not finished (interrupted?); rerun that shard's ingest to complete it, then merge`);
    }
    if (i === 0) continue;
    const ids = perShard[i].map((r) => r.runId);
    const firstIds = first.map((r) => r.runId);
    const extra = perShard[i].find((r) => !firstIds.includes(r.runId));
    const lacking = first.find((r) => !ids.includes(r.runId));
    if (extra || lacking) {
      const a = lacking ?? first[0];
      const b = extra ?? perShard[i][0];
      const keys = parameterDifferences(JSON.parse(a.parameters), JSON.parse(b.parameters));
      throw new MergeError(
        `${shown[0]} and ${shown[i]} were written with different parameters (run ${a.runId} vs ${b.runId}); ` +
          `differing parameter keys: ${keys.join(', ')}. Only shards of one ingest with the same parameters can be merged.`,
      );
    }
    for (const run of perShard[i]) {
      const ref = first.find((r) => r.runId === run.runId)!;
      if (ref.toolVersion !== run.toolVersion) {
        throw new MergeError(
          `run ${run.runId}: ${shown[0]} was written by bandwise ${ref.toolVersion}, ${shown[i]} by ${run.toolVersion}; results of two tool versions are not merged`,
        );
      }
      if (ref.parameters !== run.parameters) {
        const keys = parameterDifferences(JSON.parse(ref.parameters), JSON.parse(run.parameters));
        throw new MergeError(`run ${run.runId}: parameters differ between ${shown[0]} and ${shown[i]} at ${keys.join(', ')}`);
      }
    }
  }
  return perShard;
}

/** Shard labels must agree on N, not repeat, and (unless allowed) cover 1..N. Returns the missing ones. */
function checkShardLabels(runs: ShardRun[][], shown: readonly string[], allowMissing: boolean): string[] {
  const labels = new Map<string, string>();
  let count: number | null = null;
  runs.forEach((shardRuns, i) => {
    for (const label of new Set(shardRuns.map((r) => r.shard))) {
      if (label === null) continue;
      const m = /^(\d+)\/(\d+)$/.exec(label);
      if (!m) throw new MergeError(`${shown[i]}: runs.shard is '${label}', expected K/N`);
      const n = Number(m[2]);
      if (count !== null && n !== count)
        throw new MergeError(`${shown[i]} is shard ${label}, other inputs are shards of ${count}: shards of different splits are not merged`);
      count = n;
      if (labels.has(label) && labels.get(label) !== shown[i]) throw new MergeError(`shard ${label} is given twice: ${labels.get(label)} and ${shown[i]}`);
      labels.set(label, shown[i]);
    }
  });
  // a whole (unsharded) database among the inputs covers every recording: no shard is missing
  const whole = runs.some((shardRuns) => shardRuns.some((r) => r.shard === null));
  if (count === null || whole) return [];
  const missing = Array.from({ length: count }, (_, k) => `${k + 1}/${count}`).filter((l) => !labels.has(l));
  if (missing.length > 0 && !allowMissing) {
    throw new MergeError(
      `shard(s) ${missing.join(', ')} missing from the inputs; merge all ${count} shards, or allow a partial merge (--allow-missing-shards)`,
    );
  }
  return missing;
}

const columnList = (t: TableDef, skip: readonly string[] = []) =>
  t.columns
    .filter((c) => !skip.includes(c.name))
    .map((c) => quoteIdent(c.name))
    .join(', ');
const table = (name: string) => TABLES.find((t) => t.name === name)!;

async function copyRuns(c: DuckDBConnection, alias: string[], partialLabel: string | null): Promise<void> {
  const union = alias.map((a) => `SELECT * FROM ${a}.runs`).join(' UNION ALL ');
  await c.run(
    `INSERT INTO runs (run_id, tool_version, parameters, started_at, finished_at, shard, parameters_sha256)
     SELECT run_id, any_value(tool_version), any_value(parameters), min(started_at), max(finished_at), $1::VARCHAR, any_value(parameters_sha256)
       FROM (${union}) GROUP BY run_id ORDER BY run_id`,
    [partialLabel],
  );
}

/** Participants: the same columns in every shard; a subject found in several shards must have the same row. */
async function copyParticipants(c: DuckDBConnection, alias: string[], shown: readonly string[]): Promise<void> {
  const withTable: number[] = [];
  let columns: { name: string; type: 'DOUBLE' | 'VARCHAR' }[] | null = null;
  for (let i = 0; i < alias.length; i++) {
    const cols = await rows(c, 'SELECT column_name, data_type FROM duckdb_columns() WHERE database_name = $1 AND table_name = $2 ORDER BY column_index', [
      alias[i],
      'participants',
    ]);
    if (cols.length === 0) continue;
    const these = cols.map((r) => ({ name: String(r.column_name), type: String(r.data_type) === 'DOUBLE' ? ('DOUBLE' as const) : ('VARCHAR' as const) }));
    if (columns === null) columns = these;
    else if (canonicalJson(columns) !== canonicalJson(these)) {
      throw new MergeError(
        `participants columns differ: ${shown[withTable[0]]} has ${columns.map((x) => `${x.name} ${x.type}`).join(', ')}; ${shown[i]} has ${these.map((x) => `${x.name} ${x.type}`).join(', ')} — were the shards ingested from the same cohort table?`,
      );
    }
    withTable.push(i);
  }
  if (columns === null) return;
  await c.run(participantsCreateSql(columns));
  const cols = columns.map((x) => quoteIdent(x.name)).join(', ');
  for (const i of withTable) {
    const a = alias[i];
    const conflict = await rows(
      c,
      `SELECT DISTINCT subject FROM ((SELECT ${cols} FROM ${a}.participants WHERE subject IN (SELECT subject FROM participants))
         EXCEPT (SELECT ${cols} FROM participants)) ORDER BY subject LIMIT 5`,
    );
    if (conflict.length > 0) {
      throw new MergeError(
        `participants differ between shards for subject(s) ${conflict.map((r) => String(r.subject)).join(', ')} (in ${shown[i]}): were the shards ingested from the same cohort table?`,
      );
    }
    await c.run(`INSERT INTO participants (${cols}) SELECT ${cols} FROM ${a}.participants WHERE subject NOT IN (SELECT subject FROM participants)`);
  }
}

/**
 * Every recording once: rows come from the first shard that holds it; a recording found in
 * later shards too must have identical rows there (EXCEPT ALL both ways, timestamps and
 * cohort-level metrics aside). Returns how many duplicate copies were dropped.
 */
async function copyRecordings(c: DuckDBConnection, alias: string[], shown: readonly string[]): Promise<number> {
  const union = alias.map((a, i) => `SELECT recording_id, ${i} AS src FROM ${a}.recordings`).join(' UNION ALL ');
  await c.run(`CREATE TEMP TABLE merge_sources AS ${union}`);
  await c.run('CREATE TEMP TABLE merge_owner AS SELECT recording_id, min(src) AS src FROM merge_sources GROUP BY recording_id');
  const pairs = await rows(
    c,
    `SELECT o.src AS a, s.src AS b, count(*) AS n FROM merge_sources s JOIN merge_owner o USING (recording_id) WHERE s.src <> o.src GROUP BY ALL ORDER BY a, b`,
  );
  let dropped = 0;
  const notCohort = `metric NOT IN (${COHORT_METRICS.map(sqlText).join(', ')})`;
  for (const p of pairs) {
    const [a, b] = [Number(p.a), Number(p.b)];
    dropped += Number(p.n);
    const ids = `(SELECT recording_id FROM merge_sources s JOIN merge_owner o USING (recording_id) WHERE o.src = ${a} AND s.src = ${b})`;
    for (const name of RECORDING_TABLES) {
      const t = table(name);
      const cols = columnList(t, TIME_COLUMNS[name] ?? []);
      const where = `recording_id IN ${ids}${name === 'quality' ? ` AND ${notCohort}` : ''}`;
      const side = (x: string) => `SELECT ${cols} FROM ${x}.${name} WHERE ${where}`;
      const differ = await rows(
        c,
        `SELECT DISTINCT recording_id FROM ((${side(alias[a])} EXCEPT ALL ${side(alias[b])}) UNION ALL (${side(alias[b])} EXCEPT ALL ${side(alias[a])})) ORDER BY recording_id LIMIT 5`,
      );
      if (differ.length > 0) {
        const id = String(differ[0].recording_id);
        const file = await rows(c, `SELECT file_name FROM ${alias[a]}.recordings WHERE recording_id = $1`, [id]);
        throw new MergeError(
          `recording ${id} (${file.length ? String(file[0].file_name) : '?'}) is stored in both ${shown[a]} and ${shown[b]} with different ${name} rows` +
            `${differ.length > 1 ? ` (and ${differ.length - 1}+ more recordings)` : ''}; ingest it once, or remove one copy`,
        );
      }
    }
  }
  for (const name of RECORDING_TABLES) {
    const cols = columnList(table(name));
    if (name === 'spectra') {
      // one insert in the stored order (spectra-order.ts), so the merged file needs no rewrite
      const parts = alias.map((a, i) => `SELECT ${cols} FROM ${a}.spectra WHERE recording_id IN (SELECT recording_id FROM merge_owner WHERE src = ${i})`);
      await c.run(`INSERT INTO spectra (${cols}) SELECT ${cols} FROM (${parts.join(' UNION ALL ')}) ORDER BY ${SPECTRA_ORDER.map(quoteIdent).join(', ')}`);
      continue;
    }
    for (let i = 0; i < alias.length; i++) {
      const where = `recording_id IN (SELECT recording_id FROM merge_owner WHERE src = ${i})${name === 'quality' ? ` AND ${notCohort}` : ''}`;
      await c.run(`INSERT INTO ${name} (${cols}) SELECT ${cols} FROM ${alias[i]}.${name} WHERE ${where}`);
    }
  }
  await c.run('DROP TABLE merge_owner');
  await c.run('DROP TABLE merge_sources');
  return dropped;
}

/**
 * ingest_errors, and the warnings of no recording, from every shard; one repeated in several
 * shards (same run, file, step, field, message) once. (Warnings of a recording go with it.)
 */
async function copyErrors(c: DuckDBConnection, alias: string[]): Promise<void> {
  for (const [name, where] of [
    ['ingest_errors', 'TRUE'],
    ['warnings', 'e.recording_id IS NULL'],
  ] as const) {
    const cols = columnList(table(name));
    for (const a of alias) {
      await c.run(
        `INSERT INTO ${name} (${cols}) SELECT ${cols} FROM ${a}.${name} e
          WHERE ${where} AND NOT EXISTS (SELECT 1 FROM ${name} m WHERE m.run_id = e.run_id AND m.file IS NOT DISTINCT FROM e.file
                            AND m.step = e.step AND m.field IS NOT DISTINCT FROM e.field AND m.message = e.message)`,
      );
    }
  }
}

/**
 * The cohort-level quality pass: cohort-distance (src/core/quality/cohort-distance.ts) for every
 * run × channel × stage × reference over the mean-averaged Welch spectra of all its recordings with at
 * least one clean epoch — flagged ones included (e.g. few clean epochs): the screen shows every
 * spectrum, and the median/MAD are robust to a few noisy ones. Spectra with a non-positive bin
 * inside the distance range get no row (log10 is undefined there). Earlier cohort-distance rows
 * are replaced, in one transaction. Returns the rows written.
 *
 * One scan, sorted by group, streamed: one group's spectra in memory at a time (a query per
 * group would rescan the whole spectra table for each of channels × stages × references).
 * Run it once the whole cohort is in one database (after a merge, or after a single-process ingest).
 */
export async function cohortQualityPass(store: Store): Promise<number> {
  const options = DEFAULT_COHORT_DISTANCE;
  return store.exclusive(async () => {
    const c = store.connection;
    const rows = {
      recordingId: [] as string[],
      channel: [] as string[],
      stage: [] as Stage[],
      reference: [] as Reference[],
      value: [] as (number | null)[],
      flagged: [] as boolean[],
      reason: [] as (string | null)[],
      severity: [] as number[],
    };
    let key: string | null = null;
    let head: Record<string, unknown> = {};
    let group: { recordingId: string; power: Float32Array }[] = [];
    const flush = () => {
      if (group.length === 0) return;
      const [start, step, nBins] = [Number(head.freq_start_hz), Number(head.freq_step_hz), Number(head.n_bins)];
      const freqs = Float64Array.from({ length: nBins }, (_, k) => start + k * step);
      if (!freqs.some((f) => f >= options.fminHz && f <= options.fmaxHz)) return;
      const usable = group.filter((sp) => sp.power.every((p, k) => p > 0 || freqs[k] < options.fminHz || freqs[k] > options.fmaxHz));
      if (usable.length === 0) return;
      const [channel, stage, reference] = [String(head.channel), String(head.stage) as Stage, String(head.reference) as Reference];
      for (const row of cohortDistance(channel, stage, freqs, usable, options)) {
        rows.recordingId.push(row.recordingId);
        rows.channel.push(channel);
        rows.stage.push(stage);
        rows.reference.push(reference);
        rows.value.push(row.value);
        rows.flagged.push(row.flagged);
        rows.reason.push(row.reason);
        rows.severity.push(row.severity);
      }
    };
    const result = await c.stream(
      `SELECT r.run_id, s.channel, s.stage, s.reference, s.freq_start_hz, s.freq_step_hz, s.n_bins, s.recording_id, s.power
         FROM spectra s JOIN recordings r USING (recording_id)
        WHERE s.averaging = 'mean' AND s.estimator = 'welch' AND s.n_epochs > 0
        ORDER BY r.run_id, s.channel, s.stage, s.reference, s.freq_start_hz, s.freq_step_hz, s.n_bins, s.recording_id`,
    );
    for await (const batch of result.yieldRowObjectJs()) {
      for (const r of batch) {
        const k = [r.run_id, r.channel, r.stage, r.reference, r.freq_start_hz, r.freq_step_hz, r.n_bins].join('\u0000');
        if (k !== key) {
          flush();
          key = k;
          head = r;
          group = [];
        }
        group.push({ recordingId: String(r.recording_id), power: Float32Array.from(r.power as number[]) });
      }
    }
    flush();
    await c.run('BEGIN TRANSACTION');
    try {
      await c.run(`DELETE FROM quality WHERE metric IN (${COHORT_METRICS.map(sqlText).join(', ')})`);
      await appendColumns(c, table('quality'), rows.recordingId.length, {
        recording_id: (i) => rows.recordingId[i],
        channel: (i) => rows.channel[i],
        stage: (i) => rows.stage[i],
        metric: () => 'cohort-distance',
        value: (i) => rows.value[i],
        flagged: (i) => rows.flagged[i],
        reason: (i) => rows.reason[i],
        reference: (i) => rows.reference[i],
        severity: (i) => rows.severity[i],
      });
      await c.run('COMMIT');
    } catch (error) {
      // a COMMIT that failed (disk full) has already ended the transaction: report the first error
      await c.run('ROLLBACK').catch(() => undefined);
      throw error;
    }
    return rows.recordingId.length;
  });
}
