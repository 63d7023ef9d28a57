/**
 * What a contrast reads from the database, in a form both database layers (Node's DuckDB in the
 * command line, duckdb-wasm in the dashboard) fill the same way.
 */
import type { Stage } from '../stages.ts';

/** One stored stage spectrum (one reference and averaging), power in µV²/Hz. */
export interface SpectrumRow {
  subject: string;
  session: string | null;
  channel: string;
  stage: Stage;
  nEpochs: number;
  flagged: boolean;
  flagReason: string | null;
  power: Float32Array;
}

export interface CohortSpectra {
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  rows: SpectrumRow[];
}

/** One aperiodic fit (offset in log10 µV²/Hz, exponent, knee; null when the fit failed). */
export interface AperiodicRow {
  subject: string;
  session: string | null;
  channel: string;
  stage: Stage;
  offset: number | null;
  exponent: number | null;
  knee: number | null;
}

export interface PeakRow {
  subject: string;
  session: string | null;
  channel: string;
  stage: Stage;
  centerHz: number;
  /** log10 units above the aperiodic fit */
  height: number;
  bandwidthHz: number;
}

/** A subject, or one channel of a subject, left out of a contrast, with the reason. */
export interface Exclusion {
  subject: string;
  /** null: the whole subject */
  channel: string | null;
  /** only this stage (absent: every stage) */
  stage?: Exclude<Stage, 'unscored'>;
  reason: string;
  /** true: only this channel's values are missing, the subject stays in the analysis */
  subjectStays?: boolean;
}

/** What a stored channel was recorded against, as its EDF label names it (channels.reference_electrode; null: none named). */
export interface RecordedReference {
  subject: string;
  session: string | null;
  channel: string;
  referenceElectrode: string | null;
}

/** Where a stored channel of a recording sits: a direction on the unit sphere (channels.x, y, z; x right, y front, z up). */
export interface ChannelPositionRow {
  subject: string;
  session: string | null;
  channel: string;
  x: number;
  y: number;
  z: number;
}

export interface ContrastData {
  spectra: CohortSpectra;
  aperiodic: AperiodicRow[];
  peaks: PeakRow[];
  /** one row per subject; values typed as stored (numbers for numeric columns) */
  participants: Record<string, string | number | null>[];
  exclusions: Exclusion[];
  /** for a contrast on the 'recorded' reference: each channel's recorded reference (absent: not checked) */
  recordedReferences?: RecordedReference[];
  /** stored channel positions of the run (rows with a position; absent: the 10-10 positions of the names) */
  positions?: ChannelPositionRow[];
}
