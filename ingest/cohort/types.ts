/** A cohort as read from a table or a BIDS folder: recordings plus the participants table. */
import type { ElectrodeLayout } from '../../src/core/montage/electrodes-file.ts';

export interface BidsChannel {
  name: string;
  type: string;
  units: string;
  /** 'good' / 'bad', or null when the column is missing or n/a. */
  status: string | null;
}

export interface BidsRecordingInfo {
  powerLineHz: number | null;
  reference: string | null;
  samplingHz: number | null;
  channels: BidsChannel[];
}

/** A lights time from the cohort table: a local clock time (s after midnight) or seconds from the recording start. */
export type LightsCell = { clockS: number } | { fromStartS: number };

export interface CohortRecording {
  /** 1-based data row of the table (or of participants.tsv for BIDS), for messages. */
  row: number;
  subject: string;
  session: string | null;
  group: string | null;
  /** Absolute path. */
  recordingPath: string;
  /** The path as the cohort table writes it (BIDS: relative to the root); for `--file-names as-given`. */
  recordingAsGiven?: string;
  /** Absolute path, or null: the scoring is the recording's EDF+ annotations. */
  scoringPath: string | null;
  covariates: Record<string, number | string | null>;
  /** The cohort table's `lights_off` / `lights_on` cells, when it has those columns. */
  lights?: { off: LightsCell | null; on: LightsCell | null };
  bids?: BidsRecordingInfo;
  /** Electrode positions from the recording's positions file (BIDS electrodes file, table column or --positions). */
  positions?: ElectrodeLayout;
  /**
   * Set only when the table was read with `rowProblems: 'per-recording'`: this row cannot be
   * ingested (duplicate subject/session, recording or scoring file missing or not a regular
   * file). Ingest records it in ingest_errors (step 'cohort') and goes on with the others.
   */
  problem?: { column: string; message: string };
}

export type ColumnKind = 'number' | 'string';

export interface Cohort {
  source: 'table' | 'bids';
  /** Absolute folder the paths were resolved against (the table's folder or the BIDS root). */
  root: string;
  recordings: CohortRecording[];
  /** All participant columns: subject, group (if any) and the covariates, in file order. */
  columns: { name: string; kind: ColumnKind }[];
  /** One per subject, in order of first appearance; keys are `columns` names. */
  participants: Record<string, number | string | null>[];
}

export interface CohortProblem {
  /** 1-based data row, or null when the problem is not about one row. */
  row: number | null;
  column: string | null;
  message: string;
}

/** A cohort that cannot be used; `message` lists every problem found, with rows and columns. */
export class CohortError extends Error {
  override name = 'CohortError';
  readonly file: string;
  readonly problems: CohortProblem[];

  constructor(file: string, problems: CohortProblem[]) {
    const lines = problems.map((p) => `  - ${describePlace(p)}${p.message}`).join('\n');
    super(`${file}: ${problems.length === 1 ? 'cohort problem' : `${problems.length} cohort problems`}:\n${lines}`);
    this.file = file;
    this.problems = problems;
  }
}

function describePlace(p: CohortProblem): string {
  const parts = [p.row !== null ? `row ${p.row}` : '', p.column !== null ? `column '${p.column}'` : ''].filter(Boolean);
  return parts.length ? `${parts.join(', ')}: ` : '';
}
