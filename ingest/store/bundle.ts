/**
 * RecordingBundle: everything the pipeline computed for one recording, handed to the single
 * writer (Store.writeRecording) and stored in one transaction.
 *
 * Plain records and typed arrays only (it crosses a worker_threads boundary by structured
 * clone). recording_id is not part of the bundle: the store derives it from (run, file hash)
 * and fills it into every row. Units are in the field names or the comments; the matching
 * table columns are documented in schema.ts.
 */
import type { Stage } from '../../src/core/stages.ts';

export type Reference = 'recorded' | 'linked-mastoids' | 'contralateral-mastoid' | 'average' | 'bipolar';
export type Averaging = 'mean' | 'median';

/** recordings row (recording_id, run_id and ingested_at are filled by the store). */
export interface RecordingInfo {
  subject: string;
  session: string | null;
  /** EDF path as given in the cohort table. */
  fileName: string;
  /** SHA-256 of the EDF file bytes, 64 lowercase hex digits. */
  fileSha256: string;
  durationS: number;
  /** ok, ok-with-warnings, partial-scoring, partial-data or partial-data-and-scoring (see schema.ts). */
  status: string;
  edfVariant?: 'EDF' | 'EDF+C' | 'EDF+D' | 'BDF' | 'BDF+C' | 'BDF+D' | null;
  scoringSource?: string | null;
  epochLengthS?: number | null;
  nEpochs?: number | null;
  nEpochsDropped?: number | null;
  tstMin?: number | null;
  sePct?: number | null;
  solMin?: number | null;
  /** Minutes per stage (W, N1, N2, N3, R, unscored). */
  stageMin?: Partial<Record<Stage, number>> | null;
  /** s added to an EDF+/BDF+ scoring's onsets to place it on the recording; null for a table or text scoring. */
  scoringShiftS?: number | null;
  /** Lights off/on, s from the recording start; null when not found. */
  lightsOffS?: number | null;
  lightsOnS?: number | null;
  /** annotation, table, table+annotation or none. */
  lightsSource?: string | null;
  trtMin?: number | null;
  wasoMin?: number | null;
  remLatencyMin?: number | null;
}

export interface ChannelRow {
  channel: string;
  type: string;
  /** Unit of the stored samples and physical limits (µV). */
  unit: string | null;
  /** Physical dimension as recorded in the EDF header (uV, mV, …), null when empty. */
  recordedUnit?: string | null;
  fsHz: number;
  prefilter: string | null;
  /** Unit-sphere position (10-10 system), null if unknown. */
  x: number | null;
  y: number | null;
  z: number | null;
  label?: string | null;
  referenceElectrode?: string | null;
  /** EDF physical minimum and maximum, in `unit` (scaled like the samples). */
  physicalMin?: number | null;
  physicalMax?: number | null;
  digitalMin?: number | null;
  digitalMax?: number | null;
}

/** Epochs, columnar: row i is epoch i (epoch index = position). */
export interface EpochColumns {
  /** Onset of each epoch in s from the recording start. */
  onsetS: Float64Array;
  stage: Stage[];
  /** Why the epoch was dropped for all channels (gap, recording-end), null when kept; omit if none. */
  dropReason?: (string | null)[];
}

export interface EpochRejection {
  channel: string;
  /** Reference of the channel judged (each reference's channels are judged on their own signals). */
  reference: Reference;
  epoch: number;
  reason: string;
  /** The value that broke the rule, null if none. */
  value: number | null;
}

export interface SpectrumRow {
  channel: string;
  stage: Stage;
  reference: Reference;
  averaging: Averaging;
  nEpochs: number;
  nSegments: number;
  freqStartHz: number;
  freqStepHz: number;
  /** PSD in µV²/Hz at freqStartHz + i·freqStepHz; its length is n_bins. */
  power: Float32Array;
  flagged: boolean;
  flagReason: string | null;
}

/**
 * Epoch band powers of one reference, columnar (~10^5 rows per recording, no per-row objects).
 * Row i: channel channels[channelIdx[i]], epoch epoch[i], band bands[bandIdx[i]], power power[i].
 */
export interface BandPowerBlock {
  reference: Reference;
  channels: string[];
  bands: string[];
  channelIdx: Int32Array;
  epoch: Int32Array;
  bandIdx: Int32Array;
  power: Float32Array;
}

export interface AperiodicRow {
  channel: string;
  stage: Stage;
  reference: Reference;
  averaging: Averaging;
  method: string;
  fitLoHz: number;
  fitHiHz: number;
  offset: number | null;
  exponent: number | null;
  knee: number | null;
  r2: number | null;
  rmse: number | null;
  nPeaks: number | null;
}

export interface PeakRow {
  channel: string;
  stage: Stage;
  reference: Reference;
  averaging: Averaging;
  method: string;
  centerHz: number;
  /** Height above the aperiodic fit in log10 power. */
  height: number;
  bandwidthHz: number;
}

/** Same shape as src/core/quality's QualityRow; reference added when the metric is spectral. */
export interface QualityRowIn {
  channel: string | null;
  stage: Stage | null;
  metric: string;
  value: number | null;
  flagged: boolean;
  reason: string | null;
  reference?: Reference | null;
  /** 0 clean, ≥ 1 flagged (src/core/quality); null if not given. */
  severity?: number | null;
}

export interface ReferenceSkip {
  reference: Reference;
  reason: string;
}

/**
 * Something read or computed with a compromise (warnings table): a gap, a derived record count, a
 * converted unit, partial scoring, a band a channel cannot reach. The message never quotes EDF
 * annotation text or header identification; it names fields, channels, epochs and times.
 */
export interface WarningRow {
  /** Pipeline step that noticed it: open, read, scoring, channels, spectra, fit, irasa. */
  step: string;
  /** Header field, parameter or channel concerned, null if none. */
  field: string | null;
  message: string;
}

export interface RecordingBundle {
  runId: string;
  recording: RecordingInfo;
  channels: ChannelRow[];
  epochs: EpochColumns;
  rejections: EpochRejection[];
  spectra: SpectrumRow[];
  bandPowers: BandPowerBlock[];
  aperiodic: AperiodicRow[];
  peaks: PeakRow[];
  quality: QualityRowIn[];
  referenceSkips: ReferenceSkip[];
  /** Compromises of this recording, written in its transaction (omit or [] for none). */
  warnings?: WarningRow[];
}
