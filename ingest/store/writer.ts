/**
 * Store: the single writer of the database. Calls are serialised (one at a time on one
 * connection), and each recording is written in ONE transaction — recording row, channels,
 * epochs, rejections, spectra, band powers, epoch spectra, aperiodic fits, peaks, quality,
 * reference skips and warnings — so an interrupted or failed write never leaves half a recording.
 */
import type { DuckDBConnection, DuckDBInstance, DuckDBValue } from '@duckdb/node-api';
import type { RecordingBundle, QualityRowIn } from './bundle.ts';
import { appendColumns, type CellValue } from './chunks.ts';
import { appendEpochSpectra } from './epoch-spectra-rows.ts';
import { appendFitRows } from './fit-rows.ts';
import { StoreError } from './errors.ts';
import { ErrorRows } from './error-rows.ts';
import { recordingIdFor, runIdentity } from './identity.ts';
import { participantsCreateSql, tableDef, type TableDef } from './schema.ts';

export interface BeginRunOptions {
  /** "K/N" when this file is one shard of N. */
  shard?: string | null;
}

export type { IngestErrorIn } from './error-rows.ts';
import type { IngestErrorIn } from './error-rows.ts';

/** A quality row of the cohort-level pass (after all recordings), with its recording. */
export interface CohortQualityRow extends QualityRowIn {
  recordingId: string;
}

/** Participant cell values as read from the cohort table. */
export type ParticipantValue = string | number | null;

/** Values the cohort table uses for "missing": empty and BIDS's "n/a" (BIDS spec, tabular files). */
const MISSING = new Set(['', 'n/a']);

export class Store {
  readonly instance: DuckDBInstance;
  /** The store's connection; read.ts queries through it. */
  readonly connection: DuckDBConnection;
  readonly readOnly: boolean;
  private queue: Promise<unknown> = Promise.resolve();
  private closed = false;
  private readonly errorRows: ErrorRows;

  constructor(instance: DuckDBInstance, connection: DuckDBConnection, options: { readOnly: boolean }) {
    this.instance = instance;
    this.connection = connection;
    this.readOnly = options.readOnly;
    this.errorRows = new ErrorRows(connection);
  }

  /**
   * Begin (or resume) the run for these parameters. The run is identified by the hash of the
   * parameters JSON with keys sorted: the same parameters reuse the run (reused: true), other
   * parameters make a new run. A stored run with the same parameters but another tool version
   * is refused rather than mixed.
   */
  beginRun(toolVersion: string, parameters: unknown, options: BeginRunOptions = {}): Promise<{ runId: string; reused: boolean }> {
    return this.exclusive(async () => {
      const { runId, json, sha256 } = runIdentity(parameters);
      const found = await this.rows('SELECT tool_version FROM runs WHERE run_id = $1', [runId]);
      if (found.length > 0) {
        const stored = String(found[0].tool_version);
        if (stored !== toolVersion) {
          throw new StoreError(
            `run ${runId} with these parameters was written by bandwise ${stored}, this is ${toolVersion}; ` +
              'results of two tool versions are not mixed in one run — write to a new database file',
            { table: 'runs' },
          );
        }
        await this.connection.run('UPDATE runs SET finished_at = NULL WHERE run_id = $1', [runId]);
        return { runId, reused: true };
      }
      await appendColumns(this.connection, tableDef('runs'), 1, {
        run_id: () => runId,
        tool_version: () => toolVersion,
        parameters: () => json,
        started_at: () => new Date(),
        finished_at: () => null,
        shard: () => options.shard ?? null,
        parameters_sha256: () => sha256,
      });
      return { runId, reused: false };
    });
  }

  /** Mark the run finished (UTC now) and checkpoint, so readers see one complete file. */
  finishRun(runId: string): Promise<void> {
    return this.exclusive(async () => {
      await this.requireRun(runId);
      await this.connection.run('UPDATE runs SET finished_at = $2::TIMESTAMP WHERE run_id = $1', [runId, utcTimestampText(new Date())]);
      await this.connection.run('CHECKPOINT');
    });
  }

  /**
   * Replace the participants table with the cohort table: subject first (VARCHAR), every other
   * column kept, typed DOUBLE when it has values and every non-missing one is a number, else VARCHAR.
   * Missing values ('' and 'n/a') are stored as NULL.
   */
  writeParticipants(columns: readonly string[], rows: readonly (readonly ParticipantValue[])[]): Promise<void> {
    return this.exclusive(async () => {
      const subjectAt = columns.indexOf('subject');
      if (subjectAt < 0) throw new StoreError('the cohort table has no "subject" column', { table: 'participants' });
      const seen = new Set<string>();
      for (const name of columns) {
        if (name.trim() === '') throw new StoreError('a cohort column has an empty name', { table: 'participants' });
        if (seen.has(name)) throw new StoreError(`duplicate cohort column "${name}"`, { table: 'participants' });
        seen.add(name);
      }
      rows.forEach((row, r) => {
        if (row.length !== columns.length) {
          throw new StoreError(`has ${row.length} values, the header has ${columns.length}`, { table: 'participants', row: r });
        }
        if (cellMissing(row[subjectAt])) throw new StoreError('subject is empty', { table: 'participants', column: 'subject', row: r });
      });
      const order = [subjectAt, ...columns.map((_, i) => i).filter((i) => i !== subjectAt)];
      const defs = order.map((i) => ({
        name: columns[i],
        type: i !== subjectAt && isNumericColumn(rows, i) ? ('DOUBLE' as const) : ('VARCHAR' as const),
      }));
      const table: TableDef = {
        name: 'participants',
        doc: 'the cohort table as given',
        columns: defs.map((d) => ({ name: d.name, type: d.type, notNull: d.name === 'subject', doc: '' })),
      };
      await this.transaction(async () => {
        await this.connection.run('DROP TABLE IF EXISTS participants');
        await this.connection.run(participantsCreateSql(defs));
        const sources: Record<string, (r: number) => CellValue> = {};
        defs.forEach((d, k) => {
          const i = order[k];
          sources[d.name] = (r) => {
            const v = rows[r][i];
            if (cellMissing(v)) return null;
            return d.type === 'DOUBLE' ? cellNumber(v) : String(v);
          };
        });
        await appendColumns(this.connection, table, rows.length, sources);
      });
    });
  }

  /** Resumability: is a recording with this file hash already stored for this run? */
  hasRecording(runId: string, fileSha256: string): Promise<boolean> {
    return this.exclusive(async () => {
      const found = await this.rows('SELECT 1 AS one FROM recordings WHERE run_id = $1 AND file_sha256 = $2', [runId, fileSha256]);
      return found.length > 0;
    });
  }

  /** The subject, session, file name and scoring source a recording with this file hash is stored under in this run, or null. */
  storedRecording(
    runId: string,
    fileSha256: string,
  ): Promise<{ subject: string; session: string | null; fileName: string; scoringSource: string | null } | null> {
    return this.exclusive(async () => {
      const found = await this.rows('SELECT subject, session, file_name, scoring_source FROM recordings WHERE run_id = $1 AND file_sha256 = $2', [
        runId,
        fileSha256,
      ]);
      if (found.length === 0) return null;
      const text = (v: unknown) => (v === null ? null : String(v));
      return {
        subject: String(found[0].subject),
        session: text(found[0].session),
        fileName: String(found[0].file_name),
        scoringSource: text(found[0].scoring_source),
      };
    });
  }

  /** Replace what a stored recording says of its file (what --file-names keeps changed since it was stored). */
  renameRecording(runId: string, fileSha256: string, names: { fileName: string; scoringSource: string | null }): Promise<void> {
    return this.exclusive(async () => {
      await this.connection.run('UPDATE recordings SET file_name = $3, scoring_source = $4 WHERE run_id = $1 AND file_sha256 = $2', [
        runId,
        fileSha256,
        names.fileName,
        names.scoringSource,
      ]);
    });
  }

  /** Write one recording and everything computed from it in ONE transaction; returns its recording_id. */
  writeRecording(bundle: RecordingBundle): Promise<string> {
    return this.exclusive(async () => {
      await this.requireRun(bundle.runId);
      const id = recordingIdFor(bundle.runId, bundle.recording.fileSha256);
      const stored = await this.rows('SELECT 1 AS one FROM recordings WHERE recording_id = $1', [id]);
      if (stored.length > 0) {
        throw new StoreError(`${bundle.recording.fileName} (file hash ${bundle.recording.fileSha256.slice(0, 12)}…) is already stored in run ${bundle.runId}`, {
          table: 'recordings',
        });
      }
      await this.transaction(async () => {
        await writeBundleTables(this.connection, id, bundle);
      });
      return id;
    });
  }

  /** Rows of the warnings table for a run (every recording of it, stored now or earlier). */
  warningCount(runId: string): Promise<number> {
    return this.exclusive(async () => Number((await this.rows('SELECT count(*) AS n FROM warnings WHERE run_id = $1', [runId]))[0].n));
  }

  /** Record a failure of one file or step; the other recordings go on. */
  writeError(error: IngestErrorIn): Promise<number> {
    return this.writeErrors([error]);
  }

  /**
   * Record failures in one append; one already recorded for its run (a rerun failing the same row
   * again) is not recorded twice (error-rows.ts). Returns the rows added.
   */
  writeErrors(errors: readonly IngestErrorIn[]): Promise<number> {
    return this.exclusive(() => this.errorRows.write(errors));
  }

  /**
   * Quality rows of the cohort-level pass (after all recordings). In one transaction, rows
   * already stored for the same (recording_id, metric) are replaced, so a rerun does not
   * duplicate them.
   */
  writeQuality(rows: readonly CohortQualityRow[]): Promise<void> {
    return this.exclusive(async () => {
      const pairs = new Map<string, { recordingId: string; metric: string }>();
      for (const r of rows) pairs.set(`${r.recordingId}\u0000${r.metric}`, { recordingId: r.recordingId, metric: r.metric });
      await this.transaction(async () => {
        for (const { recordingId, metric } of pairs.values()) {
          await this.connection.run('DELETE FROM quality WHERE recording_id = $1 AND metric = $2', [recordingId, metric]);
        }
        await appendColumns(this.connection, tableDef('quality'), rows.length, {
          recording_id: (i) => rows[i].recordingId,
          ...qualitySources(rows),
        });
      });
    });
  }

  /** Storage compatibility of the open file as DuckDB reports it (duckdb_databases().tags), e.g. "v1.4.0+". */
  storageVersion(): Promise<string> {
    return this.exclusive(async () => {
      const found = await this.rows("SELECT tags['storage_version'] AS v FROM duckdb_databases() WHERE database_name = current_database()");
      if (found.length === 0 || found[0].v === null) throw new StoreError('DuckDB reports no storage version for this file');
      return String(found[0].v);
    });
  }

  /** Checkpoint (unless read-only) and close. */
  close(): Promise<void> {
    return this.exclusive(async () => {
      if (this.closed) return;
      this.closed = true;
      try {
        if (!this.readOnly) await this.connection.run('CHECKPOINT');
      } finally {
        // closed even when the checkpoint fails (disk full): what was committed stays in the write-ahead log
        this.connection.closeSync();
        this.instance.closeSync();
      }
    });
  }

  /** Run fn after every earlier call has settled (one statement stream on one connection). */
  exclusive<T>(fn: () => Promise<T>): Promise<T> {
    const next = this.queue.then(() => {
      if (this.closed) throw new StoreError('the store is closed');
      return fn();
    });
    this.queue = next.catch(() => undefined);
    return next;
  }

  private async transaction(fn: () => Promise<void>): Promise<void> {
    await this.connection.run('BEGIN TRANSACTION');
    try {
      await fn();
      await this.connection.run('COMMIT');
    } catch (error) {
      // a COMMIT that failed (disk full) has already ended the transaction: the first error is the one to report
      await this.connection.run('ROLLBACK').catch(() => undefined);
      throw error;
    }
  }

  private async requireRun(runId: string): Promise<void> {
    const found = await this.rows('SELECT 1 AS one FROM runs WHERE run_id = $1', [runId]);
    if (found.length === 0) throw new StoreError(`no run ${runId}; call beginRun first`, { table: 'runs' });
  }

  private async rows(sql: string, values: DuckDBValue[] = []): Promise<Record<string, unknown>[]> {
    const reader = await this.connection.runAndReadAll(sql, values);
    return reader.getRowObjectsJS();
  }
}

/** A column is numeric when it has at least one value and every non-missing value is a number. */
function isNumericColumn(rows: readonly (readonly ParticipantValue[])[], i: number): boolean {
  let present = 0;
  for (const row of rows) {
    if (cellMissing(row[i])) continue;
    if (cellNumber(row[i]) === null) return false;
    present++;
  }
  return present > 0;
}

function cellMissing(v: ParticipantValue | undefined): boolean {
  return v === null || v === undefined || (typeof v === 'string' && MISSING.has(v.trim()));
}

/** The number a cohort cell holds, or null when it is not a plain decimal number. */
function cellNumber(v: ParticipantValue): number | null {
  if (typeof v === 'number') return Number.isFinite(v) ? v : null;
  if (typeof v !== 'string') return null;
  const s = v.trim();
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s)) return null;
  return Number(s);
}

function utcTimestampText(d: Date): string {
  return d.toISOString().replace('T', ' ').replace('Z', '');
}

function qualitySources(rows: readonly QualityRowIn[]): Record<string, (i: number) => CellValue> {
  return {
    channel: (i) => rows[i].channel,
    stage: (i) => rows[i].stage,
    metric: (i) => rows[i].metric,
    value: (i) => rows[i].value,
    flagged: (i) => rows[i].flagged,
    reason: (i) => rows[i].reason,
    reference: (i) => rows[i].reference ?? null,
    severity: (i) => rows[i].severity ?? null,
  };
}

/** All tables of one recording, in dependency order (called inside the transaction). */
async function writeBundleTables(c: DuckDBConnection, id: string, b: RecordingBundle): Promise<void> {
  const rec = b.recording;
  const stageMin = rec.stageMin ?? {};
  await appendColumns(c, tableDef('recordings'), 1, {
    recording_id: () => id,
    subject: () => rec.subject,
    session: () => rec.session,
    file_name: () => rec.fileName,
    file_sha256: () => rec.fileSha256,
    duration_s: () => rec.durationS,
    run_id: () => b.runId,
    status: () => rec.status,
    edf_variant: () => rec.edfVariant ?? null,
    scoring_source: () => rec.scoringSource ?? null,
    epoch_length_s: () => rec.epochLengthS ?? null,
    n_channels: () => b.channels.length,
    n_epochs: () => rec.nEpochs ?? null,
    n_epochs_dropped: () => rec.nEpochsDropped ?? null,
    tst_min: () => rec.tstMin ?? null,
    se_pct: () => rec.sePct ?? null,
    sol_min: () => rec.solMin ?? null,
    w_min: () => stageMin.W ?? null,
    n1_min: () => stageMin.N1 ?? null,
    n2_min: () => stageMin.N2 ?? null,
    n3_min: () => stageMin.N3 ?? null,
    r_min: () => stageMin.R ?? null,
    unscored_min: () => stageMin.unscored ?? null,
    ingested_at: () => new Date(),
    scoring_shift_s: () => rec.scoringShiftS ?? null,
    lights_off_s: () => rec.lightsOffS ?? null,
    lights_on_s: () => rec.lightsOnS ?? null,
    lights_source: () => rec.lightsSource ?? null,
    trt_min: () => rec.trtMin ?? null,
    waso_min: () => rec.wasoMin ?? null,
    rem_latency_min: () => rec.remLatencyMin ?? null,
  });

  const ch = b.channels;
  await appendColumns(c, tableDef('channels'), ch.length, {
    recording_id: () => id,
    channel: (i) => ch[i].channel,
    type: (i) => ch[i].type,
    unit: (i) => ch[i].unit,
    fs_hz: (i) => ch[i].fsHz,
    prefilter: (i) => ch[i].prefilter,
    x: (i) => ch[i].x,
    y: (i) => ch[i].y,
    z: (i) => ch[i].z,
    label: (i) => ch[i].label ?? null,
    reference_electrode: (i) => ch[i].referenceElectrode ?? null,
    physical_min: (i) => ch[i].physicalMin ?? null,
    physical_max: (i) => ch[i].physicalMax ?? null,
    digital_min: (i) => ch[i].digitalMin ?? null,
    digital_max: (i) => ch[i].digitalMax ?? null,
    recorded_unit: (i) => ch[i].recordedUnit ?? null,
    position_source: (i) => ch[i].positionSource ?? (ch[i].x === null ? 'none' : 'template'),
    x_m: (i) => ch[i].xM ?? null,
    y_m: (i) => ch[i].yM ?? null,
    z_m: (i) => ch[i].zM ?? null,
  });

  const ep = b.epochs;
  if (ep.stage.length !== ep.onsetS.length || (ep.dropReason && ep.dropReason.length !== ep.onsetS.length)) {
    throw new StoreError(`epoch columns differ in length (onsetS ${ep.onsetS.length}, stage ${ep.stage.length})`, { table: 'epochs' });
  }
  await appendColumns(c, tableDef('epochs'), ep.onsetS.length, {
    recording_id: () => id,
    epoch: (i) => i,
    onset_s: (i) => ep.onsetS[i],
    stage: (i) => ep.stage[i],
    drop_reason: (i) => (ep.dropReason ? ep.dropReason[i] : null),
  });

  const rj = b.rejections;
  await appendColumns(c, tableDef('epoch_rejections'), rj.length, {
    recording_id: () => id,
    channel: (i) => rj[i].channel,
    epoch: (i) => rj[i].epoch,
    reason: (i) => rj[i].reason,
    value: (i) => rj[i].value,
    reference: (i) => rj[i].reference,
  });

  const sp = b.spectra;
  await appendColumns(c, tableDef('spectra'), sp.length, {
    recording_id: () => id,
    channel: (i) => sp[i].channel,
    stage: (i) => sp[i].stage,
    reference: (i) => sp[i].reference,
    averaging: (i) => sp[i].averaging,
    estimator: (i) => sp[i].estimator ?? 'welch',
    n_epochs: (i) => sp[i].nEpochs,
    n_segments: (i) => sp[i].nSegments,
    freq_start_hz: (i) => sp[i].freqStartHz,
    freq_step_hz: (i) => sp[i].freqStepHz,
    n_bins: (i) => sp[i].power.length,
    power: (i) => sp[i].power,
    flagged: (i) => sp[i].flagged,
    flag_reason: (i) => sp[i].flagReason,
  });

  for (const block of b.bandPowers) {
    const n = block.power.length;
    if (block.channelIdx.length !== n || block.epoch.length !== n || block.bandIdx.length !== n) {
      throw new StoreError(`band power columns differ in length (power ${n})`, { table: 'epoch_band_power' });
    }
    await appendColumns(c, tableDef('epoch_band_power'), n, {
      recording_id: () => id,
      channel: (i) => indexed(block.channels, block.channelIdx[i], 'channel', i),
      epoch: (i) => block.epoch[i],
      band: (i) => indexed(block.bands, block.bandIdx[i], 'band', i),
      power: (i) => block.power[i],
      reference: () => block.reference,
    });
  }

  await appendEpochSpectra(c, id, b.epochSpectra ?? []);

  await appendFitRows(c, id, b.aperiodic, b.peaks);

  const q = b.quality;
  await appendColumns(c, tableDef('quality'), q.length, { recording_id: () => id, ...qualitySources(q) });

  const rs = b.referenceSkips;
  await appendColumns(c, tableDef('reference_skips'), rs.length, {
    recording_id: () => id,
    reference: (i) => rs[i].reference,
    reason: (i) => rs[i].reason,
  });

  const wr = b.warnings ?? [];
  const loggedAt = new Date();
  await appendColumns(c, tableDef('warnings'), wr.length, {
    run_id: () => b.runId,
    recording_id: () => id,
    file: () => rec.fileName,
    step: (i) => wr[i].step,
    field: (i) => wr[i].field,
    message: (i) => wr[i].message,
    logged_at: () => loggedAt,
  });
}

function indexed(names: readonly string[], index: number, what: string, row: number): string {
  const name = names[index];
  if (name === undefined) {
    throw new StoreError(`${what} index ${index} outside 0..${names.length - 1}`, { table: 'epoch_band_power', column: what, row });
  }
  return name;
}
