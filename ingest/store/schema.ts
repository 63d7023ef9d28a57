/**
 * The database schema: every table of docs/design.md ("The database") with exactly its
 * names and columns, plus added columns (added freely, none renamed). The names are a public
 * interface — Python, R and DuckDB users open the file directly.
 *
 * Tables are described as data (TableDef) so that the CREATE statements, the writer's column
 * order and the documentation come from one place.
 *
 * No table has a column for the EDF "local patient identification" or "local recording
 * identification" header fields: they often hold names and birth dates.
 */
import { VIEWS, createViewSql } from './views.ts';

/** SQL column types used by the store. FLOAT[] and USMALLINT[] are variable-length lists of 32-bit floats and 16-bit unsigned integers. */
export type SqlType = 'VARCHAR' | 'INTEGER' | 'DOUBLE' | 'FLOAT' | 'BOOLEAN' | 'FLOAT[]' | 'USMALLINT[]' | 'JSON' | 'TIMESTAMP';

export interface ColumnDef {
  name: string;
  type: SqlType;
  notNull?: boolean;
  /** One line: meaning and unit. */
  doc: string;
}

export interface TableDef {
  name: string;
  doc: string;
  columns: readonly ColumnDef[];
  primaryKey?: readonly string[];
}

const col = (name: string, type: SqlType, doc: string, notNull = false): ColumnDef => ({ name, type, doc, notNull });

/**
 * recordings.status, one of: ok (read whole, nothing noted); ok-with-warnings (complete, with rows
 * in warnings: a converted unit, a band a slow channel cannot reach, ignored events, …);
 * partial-scoring (part of the night has no usable stage: scoring starts late, ends early, has
 * gaps or unknown labels); partial-data (part of the signal is missing: EDF+D gaps, a truncated
 * last data record); partial-data-and-scoring (both). The warnings rows say what and where.
 */
const RECORDING_STATUS_DOC =
  'ok, ok-with-warnings, partial-scoring (scoring starts late, ends early or has gaps), partial-data (EDF+D gaps, truncated last record) or partial-data-and-scoring; see warnings';

/**
 * Keys shared by spectra, aperiodic and peaks: one spectrum per recording × channel × stage ×
 * reference × averaging × estimator. Fits are made per estimator, so aperiodic and peaks carry it
 * too (IRASA fits, made from the time series, carry 'welch'). quality rows do not: the quality
 * screen and its fit-quality metrics are computed on the Welch spectra only.
 */
const SPECTRUM_KEYS: readonly ColumnDef[] = [
  col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
  col('channel', 'VARCHAR', 'electrode name without type prefix (C3, M1) or bipolar pair (C3-P3)', true),
  col('stage', 'VARCHAR', 'AASM stage label W, N1, N2, N3, R', true),
  col('reference', 'VARCHAR', 'recorded, linked-mastoids, contralateral-mastoid, average or bipolar', true),
  col('averaging', 'VARCHAR', "mean or median (median bias-corrected) over the stage's clean epochs", true),
  col(
    'estimator',
    'VARCHAR',
    'welch (Welch 1967) or multitaper (Thomson 1982; NW and K in runs.parameters); rows written before the column existed are welch',
    true,
  ),
];

export const TABLES: readonly TableDef[] = [
  {
    name: 'runs',
    doc: 'One ingest run: the tool version and every parameter. A run is identified by a hash of its parameters.',
    primaryKey: ['run_id'],
    columns: [
      col('run_id', 'VARCHAR', 'first 16 hex digits of the SHA-256 of the parameters JSON with keys sorted', true),
      col('tool_version', 'VARCHAR', 'bandwise version that wrote the run', true),
      col('parameters', 'JSON', 'every ingest parameter, keys sorted', true),
      col('started_at', 'TIMESTAMP', 'UTC time the run was first begun', true),
      col('finished_at', 'TIMESTAMP', 'UTC time the run last finished; NULL while running or after an interrupt'),
      col('shard', 'VARCHAR', '"K/N" when written by one shard of N, else NULL'),
      col('parameters_sha256', 'VARCHAR', 'full SHA-256 (hex) of the parameters JSON with keys sorted', true),
    ],
  },
  // participants is created dynamically from the cohort table's columns: see participantsCreateSql.
  {
    name: 'recordings',
    doc: 'One row per ingested recording (EDF file) of a run. Never any EDF patient or recording identification text.',
    primaryKey: ['recording_id'],
    columns: [
      col('recording_id', 'VARCHAR', 'first 16 hex digits of SHA-256 of run_id and file_sha256; unique across runs and shards', true),
      col('subject', 'VARCHAR', 'subject label from the cohort table', true),
      col('session', 'VARCHAR', 'session label from the cohort table, NULL if none'),
      col('file_name', 'VARCHAR', 'EDF path as given in the cohort table (relative to it)', true),
      col('file_sha256', 'VARCHAR', 'SHA-256 (hex) of the EDF file bytes', true),
      col('duration_s', 'DOUBLE', 'recorded duration in s (sum of data records)', true),
      col('run_id', 'VARCHAR', 'runs.run_id', true),
      col('status', 'VARCHAR', RECORDING_STATUS_DOC, true),
      col('edf_variant', 'VARCHAR', 'EDF, EDF+C, EDF+D, BDF, BDF+C or BDF+D'),
      col('scoring_source', 'VARCHAR', 'where the hypnogram came from: scoring file or edf-annotations'),
      col('epoch_length_s', 'DOUBLE', 'scoring epoch length in s (usually 30)'),
      col('n_channels', 'INTEGER', 'channels stored for this recording'),
      col('n_epochs', 'INTEGER', 'scored epochs inside the recording'),
      col('n_epochs_dropped', 'INTEGER', 'epochs dropped for crossing an EDF+D gap or the recording end'),
      col('tst_min', 'DOUBLE', 'total sleep time in min (N1+N2+N3+R) between lights off and lights on (AASM)'),
      col(
        'se_pct',
        'DOUBLE',
        'sleep efficiency in %: TST / TRT × 100 (AASM); TRT from lights off to lights on, or over the scored period when lights are unknown (lights_source none)',
      ),
      col('sol_min', 'DOUBLE', 'sleep onset latency in min: lights off (or the first scored epoch) to the first sleep epoch (AASM)'),
      col('w_min', 'DOUBLE', 'minutes scored W'),
      col('n1_min', 'DOUBLE', 'minutes scored N1'),
      col('n2_min', 'DOUBLE', 'minutes scored N2'),
      col('n3_min', 'DOUBLE', 'minutes scored N3'),
      col('r_min', 'DOUBLE', 'minutes scored R'),
      col('unscored_min', 'DOUBLE', 'minutes without a usable score'),
      col('ingested_at', 'TIMESTAMP', 'UTC time the recording was committed', true),
      col(
        'scoring_shift_s',
        'DOUBLE',
        "s added to the onsets of an EDF+/BDF+ scoring (counted from its file start) to place it on the recording: scoring file start − recording start, moved onto the epoch grid when less than 1 s off; 0 for the recording's own annotations; NULL for a table or text scoring (laid on the recording start)",
      ),
      col('lights_off_s', 'DOUBLE', 'lights off in s from the recording start; NULL when not found (the first scored epoch stands in)'),
      col('lights_on_s', 'DOUBLE', 'lights on in s from the recording start; NULL when not found (the end of the last scored epoch stands in)'),
      col('lights_source', 'VARCHAR', 'where lights off/on came from: annotation, table, table+annotation, or none (the scored period stands in)'),
      col('trt_min', 'DOUBLE', 'total recording time in min: lights off to lights on (AASM)'),
      col('waso_min', 'DOUBLE', 'wake after sleep onset in min: W epochs after sleep onset, before lights on (AASM)'),
      col('rem_latency_min', 'DOUBLE', 'REM latency in min: sleep onset to the first R epoch (AASM); NULL without sleep or R'),
    ],
  },
  {
    name: 'channels',
    doc: 'Channels of a recording as stored (after channel selection).',
    primaryKey: ['recording_id', 'channel'],
    columns: [
      col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
      col('channel', 'VARCHAR', 'electrode name without type prefix (C3, M1)', true),
      col('type', 'VARCHAR', 'signal type from the label prefix or default (EEG, EOG, EMG, ECG, …)', true),
      col('unit', 'VARCHAR', 'unit of the stored samples and of physical_min/max: µV (mV, V and nV signals are scaled)'),
      col('fs_hz', 'DOUBLE', 'sampling rate in Hz', true),
      col('prefilter', 'VARCHAR', 'EDF prefiltering field'),
      col(
        'x',
        'DOUBLE',
        'electrode position: direction from the head centre on the unit sphere, x towards the right ear (from the positions file or the 10-10 template, see position_source), NULL if unknown',
      ),
      col('y', 'DOUBLE', 'electrode position on the unit sphere, y towards the nose, NULL if unknown'),
      col('z', 'DOUBLE', 'electrode position on the unit sphere, z towards the vertex, NULL if unknown'),
      col('label', 'VARCHAR', 'signal label as in the EDF header'),
      col('reference_electrode', 'VARCHAR', 'reference the channel was recorded against, if known from the label (e.g. M2)'),
      col('physical_min', 'DOUBLE', 'EDF physical minimum, in unit (µV; scaled like the samples)'),
      col('physical_max', 'DOUBLE', 'EDF physical maximum, in unit (µV; scaled like the samples)'),
      col('digital_min', 'INTEGER', 'EDF digital minimum'),
      col('digital_max', 'INTEGER', 'EDF digital maximum'),
      col('recorded_unit', 'VARCHAR', 'physical dimension as recorded in the EDF header (uV, mV, …), NULL when empty (taken as µV)'),
      col(
        'position_source',
        'VARCHAR',
        "where x, y, z came from: file (the recording's positions file, directions from its fitted head sphere), template (idealised 10-10 position of the name) or none",
      ),
      col('x_m', 'DOUBLE', "position x as the positions file gives it, m, towards the right ear, the file's origin; NULL unless position_source is file"),
      col('y_m', 'DOUBLE', 'position y as the positions file gives it, m, towards the nose; NULL unless position_source is file'),
      col('z_m', 'DOUBLE', 'position z as the positions file gives it, m, towards the vertex; NULL unless position_source is file'),
    ],
  },
  {
    name: 'epochs',
    doc: 'Scoring epochs of a recording.',
    primaryKey: ['recording_id', 'epoch'],
    columns: [
      col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
      col('epoch', 'INTEGER', 'epoch index from 0 in scoring order', true),
      col('onset_s', 'DOUBLE', 'onset in s from the recording start', true),
      col('stage', 'VARCHAR', 'AASM stage W, N1, N2, N3, R or unscored', true),
      col('drop_reason', 'VARCHAR', 'why the epoch was dropped for all channels (gap, recording-end), NULL if kept'),
    ],
  },
  {
    name: 'epoch_rejections',
    doc: 'Epochs rejected for one channel, each with its reason.',
    columns: [
      col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
      col('channel', 'VARCHAR', 'channel name', true),
      col('epoch', 'INTEGER', 'epochs.epoch', true),
      col('reason', 'VARCHAR', 'rejection rule: amplitude, flat, broadband-outlier or muscle-outlier (src/core/quality/epoch-rejection.ts)', true),
      col('value', 'DOUBLE', 'the value that broke the rule (unit depends on the rule), NULL if none'),
      col('reference', 'VARCHAR', 'reference of the channel judged: recorded, linked-mastoids, contralateral-mastoid, average or bipolar', true),
    ],
  },
  {
    name: 'spectra',
    doc: 'Per-stage power spectral density (Welch 1967, or multitaper, Thomson 1982: see estimator), µV²/Hz, frequencies freq_start_hz + i·freq_step_hz.',
    primaryKey: ['recording_id', 'channel', 'stage', 'reference', 'averaging', 'estimator'],
    columns: [
      ...SPECTRUM_KEYS,
      col('n_epochs', 'INTEGER', 'clean epochs averaged', true),
      col('n_segments', 'INTEGER', 'segments averaged (each with K tapers for multitaper)', true),
      col('freq_start_hz', 'DOUBLE', 'frequency of the first bin in Hz', true),
      col('freq_step_hz', 'DOUBLE', 'bin spacing in Hz', true),
      col('n_bins', 'INTEGER', 'number of bins (length of power)', true),
      col('power', 'FLOAT[]', 'power spectral density per bin in µV²/Hz', true),
      col('flagged', 'BOOLEAN', 'true when the spectrum should not be used as is (e.g. too few clean epochs)', true),
      col('flag_reason', 'VARCHAR', 'plain reason for the flag, NULL if not flagged'),
    ],
  },
  {
    name: 'epoch_band_power',
    doc: 'Band power per epoch and channel, for plotting the night over time with the hypnogram.',
    columns: [
      col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
      col('channel', 'VARCHAR', 'channel name', true),
      col('epoch', 'INTEGER', 'epochs.epoch', true),
      col('band', 'VARCHAR', 'band id (its range and method are in runs.parameters)', true),
      col('power', 'FLOAT', 'band power (µV² for an integral, µV²/Hz for a mean density; see runs.parameters)', true),
      col('reference', 'VARCHAR', 'reference of the signal the power was computed on', true),
    ],
  },
  {
    name: 'epoch_spectra',
    doc: "Optional (ingest --epoch-spectra): each epoch's Welch spectrum per channel, compact: log10 power at bin b = log10_min + levels[b + 1]·log10_step (error at most log10_step/2).",
    columns: [
      col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
      col('channel', 'VARCHAR', 'channel name', true),
      col('reference', 'VARCHAR', 'reference of the signal (recorded)', true),
      col('epoch', 'INTEGER', 'epochs.epoch (epochs without data have no row; rejected ones keep theirs, see epoch_rejections)', true),
      col('freq_start_hz', 'DOUBLE', 'frequency of the first bin in Hz', true),
      col('freq_step_hz', 'DOUBLE', 'bin spacing in Hz', true),
      col('n_bins', 'INTEGER', 'number of bins (length of levels)', true),
      col('log10_min', 'FLOAT', 'log10 power (µV²/Hz) of level 0', true),
      col('log10_step', 'FLOAT', 'log10 power per level: (row maximum − minimum)/65535', true),
      col('levels', 'USMALLINT[]', 'quantised log10 power per bin, 0 … 65535', true),
    ],
  },
  {
    name: 'aperiodic',
    doc: 'Aperiodic fit per spectrum: log10 P(f) = offset − log10(knee + f^exponent).',
    columns: [
      ...SPECTRUM_KEYS,
      col('method', 'VARCHAR', 'fit method, e.g. spectral-fit (Donoghue et al. 2020) or irasa (Wen & Liu 2016)', true),
      col('fit_lo_hz', 'DOUBLE', 'lower end of the fit range in Hz', true),
      col('fit_hi_hz', 'DOUBLE', 'upper end of the fit range in Hz', true),
      col('offset', 'DOUBLE', 'offset b in log10(µV²/Hz)'),
      col('exponent', 'DOUBLE', 'aperiodic exponent χ'),
      col('knee', 'DOUBLE', 'knee k (Hz^χ); 0 for the plain power law, NULL if not fitted'),
      col('r2', 'DOUBLE', 'R² of the full model in log10 power over the fit range'),
      col('rmse', 'DOUBLE', 'root-mean-square error in log10 power over the fit range'),
      col('n_peaks', 'INTEGER', 'number of Gaussian peaks in the joint fit'),
    ],
  },
  {
    name: 'peaks',
    doc: 'Gaussian peaks above the aperiodic fit, one row per peak.',
    columns: [
      ...SPECTRUM_KEYS,
      col('method', 'VARCHAR', 'aperiodic.method of the fit the peak belongs to', true),
      col('center_hz', 'DOUBLE', 'peak centre in Hz', true),
      col('height', 'DOUBLE', 'height above the aperiodic fit in log10 power', true),
      col('bandwidth_hz', 'DOUBLE', 'peak bandwidth in Hz: full width at half maximum of the Gaussian, 2·√(2 ln 2)·σ', true),
    ],
  },
  {
    name: 'quality',
    doc: 'Quality metrics with flags and plain reasons (src/core/quality).',
    columns: [
      col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
      col('channel', 'VARCHAR', 'channel name, NULL for a recording-level metric'),
      col('stage', 'VARCHAR', 'stage, NULL when the metric is not per stage'),
      col('metric', 'VARCHAR', 'metric id', true),
      col('value', 'DOUBLE', "metric value (unit in the metric's documentation), NULL if not computable"),
      col('flagged', 'BOOLEAN', 'true when the value breaks its threshold', true),
      col('reason', 'VARCHAR', 'plain reason for the flag, NULL if not flagged'),
      col('reference', 'VARCHAR', 'reference of the spectrum the metric was computed on, NULL if not spectral'),
      col('severity', 'DOUBLE', 'value on a common scale relative to its threshold: 0 clean, ≥ 1 flagged, capped at 10 (src/core/quality/severity)'),
    ],
  },
  {
    name: 'ingest_errors',
    doc: 'Failures while ingesting; the other recordings go on.',
    columns: [
      col('run_id', 'VARCHAR', 'runs.run_id', true),
      col('file', 'VARCHAR', 'file that failed (relative to the cohort table)'),
      col('step', 'VARCHAR', 'pipeline step, e.g. read-edf, scoring, welch', true),
      col('field', 'VARCHAR', 'header field or column at fault, NULL if none'),
      col('message', 'VARCHAR', 'error message', true),
      col('logged_at', 'TIMESTAMP', 'UTC time of the error', true),
    ],
  },
  {
    name: 'warnings',
    doc: 'What was read or computed with a compromise (gaps, partial scoring, converted units, bands a channel cannot reach, a derived record count). Never quotes annotation text or header identification.',
    columns: [
      col('run_id', 'VARCHAR', 'runs.run_id', true),
      col('recording_id', 'VARCHAR', 'recordings.recording_id; NULL when the warning concerns a file with no recording row'),
      col('file', 'VARCHAR', 'file the warning belongs to (recordings.file_name, relative to the cohort table)'),
      col('step', 'VARCHAR', 'step that noticed it: open (EDF header), read (data records), scoring, channels, spectra, fit, irasa', true),
      col(
        'field',
        'VARCHAR',
        'header field, parameter (e.g. bands, rejection.muscleHz) or scoring note (gap, unknown-label, ignored-events, truncated) concerned, NULL if none',
      ),
      col('message', 'VARCHAR', 'what was noticed and what was done about it', true),
      col('logged_at', 'TIMESTAMP', 'UTC time the warning was written (with its recording)', true),
    ],
  },
  {
    name: 'reference_skips',
    doc: 'References that were requested but not computed for a recording, with the reason.',
    columns: [
      col('recording_id', 'VARCHAR', 'recordings.recording_id', true),
      col('reference', 'VARCHAR', 'the reference that was skipped', true),
      col('reason', 'VARCHAR', 'why the montage cannot support it', true),
    ],
  },
];

/**
 * Optional tables of the exploration/confirmation workflow (docs/design.md, "Optional"): made by
 * `bandwise split`, `lock` and `confirm` when first used, never by ingest (src/analysis/split-store.ts).
 */
export const CONFIRMATION_TABLES: readonly TableDef[] = [
  {
    name: 'subject_split',
    doc: 'The exploration/confirmation split of the subjects, one row per subject and split; the current split is the one not replaced.',
    primaryKey: ['split_id', 'subject'],
    columns: [
      col('split_id', 'VARCHAR', 'first 12 hex digits of the SHA-256 of the split (settings, time, parts)', true),
      col('subject', 'VARCHAR', 'participants.subject', true),
      col('part', 'VARCHAR', 'exploration or confirmation', true),
      col('seed', 'INTEGER', 'seed of the draw', true),
      col('fraction', 'DOUBLE', 'share of each stratum in the exploration part', true),
      col('stratify', 'JSON', 'participants columns the split is stratified by (list)', true),
      col('blind_column', 'VARCHAR', 'participants column whose values are coded while exploring, NULL when not blinded'),
      col('group_codes', 'JSON', 'code of each value of blind_column ("group A", …), drawn from the seed; NULL when not blinded'),
      col('made_at', 'TIMESTAMP', 'UTC time the split was made', true),
      col('replaced_at', 'TIMESTAMP', 'UTC time a new split replaced it, NULL for the current split'),
    ],
  },
  {
    name: 'analysis_plans',
    doc: 'Locked analysis plans: contrasts, ingest run, exclusions and split, fixed before the confirmation part is analysed. Never changed.',
    primaryKey: ['plan_id'],
    columns: [
      col('plan_id', 'VARCHAR', 'first 12 hex digits of sha256', true),
      col('sha256', 'VARCHAR', 'SHA-256 (hex) of plan', true),
      col('locked_at', 'TIMESTAMP', 'UTC time the plan was locked', true),
      col('split_id', 'VARCHAR', 'subject_split.split_id of the split the plan was locked on', true),
      col('run_id', 'VARCHAR', 'runs.run_id the plan reads', true),
      col('contrasts', 'JSON', 'the contrast JSONs (defaults filled in), as locked', true),
      col('exclusions', 'JSON', 'the exclusions (subject, channel, reason), as locked', true),
      col('plan', 'JSON', 'the canonical plan JSON (keys sorted) the hash is of', true),
    ],
  },
  {
    name: 'plan_confirmations',
    doc: 'Each run of a plan on the confirmation part, numbered per plan.',
    primaryKey: ['plan_id', 'confirmation_run'],
    columns: [
      col('plan_id', 'VARCHAR', 'analysis_plans.plan_id', true),
      col('confirmation_run', 'INTEGER', '1 for the first confirmation of the plan, 2 for the next, …', true),
      col('confirmed_at', 'TIMESTAMP', 'UTC time of the confirmation', true),
    ],
  },
];

/** All table names of the database, participants included. */
export const TABLE_NAMES: readonly string[] = [...TABLES.map((t) => t.name), 'participants'];

export function tableDef(name: string): TableDef {
  const table = TABLES.find((t) => t.name === name);
  if (!table) throw new Error(`unknown table: ${name}`);
  return table;
}

/** Quote an identifier for DuckDB ("offset", "group" are reserved words). */
export function quoteIdent(name: string): string {
  return `"${name.replaceAll('"', '""')}"`;
}

export function createTableSql(table: TableDef): string {
  const lines = table.columns.map((c) => `  ${quoteIdent(c.name)} ${c.type}${c.notNull ? ' NOT NULL' : ''}`);
  if (table.primaryKey) lines.push(`  PRIMARY KEY (${table.primaryKey.map(quoteIdent).join(', ')})`);
  return `CREATE TABLE IF NOT EXISTS ${quoteIdent(table.name)} (\n${lines.join(',\n')}\n)`;
}

/** CREATE statements for all fixed tables (participants is created by participantsCreateSql), then the tidy views (views.ts). */
export function schemaSql(): string[] {
  return [...TABLES.map(createTableSql), ...VIEWS.map(createViewSql)];
}

/** participants(subject VARCHAR first, then every other cohort column as DOUBLE or VARCHAR). */
export function participantsCreateSql(columns: readonly { name: string; type: 'DOUBLE' | 'VARCHAR' }[]): string {
  const lines = columns.map((c) => `  ${quoteIdent(c.name)} ${c.type}${c.name === 'subject' ? ' NOT NULL' : ''}`);
  return `CREATE TABLE participants (\n${lines.join(',\n')}\n)`;
}
