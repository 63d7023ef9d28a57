/**
 * What a methods report needs besides the result: facts about the database the result was
 * computed from (gathered by src/analysis/report-facts.ts in Node, by the dashboard's queries in the
 * browser) and the ledger counts. Plain JSON.
 */

/** The ingest parameters the report writes out (a subset of runs.parameters, as stored). */
export interface IngestParameterFacts {
  epochS: number;
  segmentS: number;
  overlap: number;
  maxFreqHz: number;
  references: string[];
  bipolarPairs: string[];
  rejection: { maxPeakToPeakUv: number; flatSdUv: number; flatRunS: number; outlierZ: number; broadbandHz: [number, number]; muscleHz: [number, number] };
  minEpochs: number;
  fit: {
    fitRangeHz: [number, number];
    aperiodicForm?: string;
    maxPeaks?: number;
    peakWidthHz?: [number, number];
    peakMinHeight?: number;
    peakThresholdSd?: number;
  } | null;
  /** the multitaper estimate's NW and K, null when the run stored Welch only */
  multitaper: { nw: number; k: number } | null;
}

export interface StageEpochCounts {
  stage: string;
  /** epochs of this stage × channels, epochs dropped for all channels not counted */
  channelEpochs: number;
  rejected: number;
  byReason: Record<string, number>;
}

export interface DatabaseFacts {
  file: string;
  runId: string;
  toolVersion: string;
  /** false when the run had not finished (interrupted or still being written); absent in facts of older callers */
  runFinished?: boolean;
  ingestParameters: unknown;
  recordings: number;
  samplingRatesHz: number[];
  channelsPerRecording: { min: number; max: number };
  epochs: StageEpochCounts[];
  /** distinct aperiodic fit ranges stored for the analysis' stage, reference and averaging */
  fitRangesHz: [number, number][];
  /** the EEG channels as recorded: the reference each label names (channels.reference_electrode, null: none) and in how many recordings */
  recordedDerivations?: RecordedDerivation[];
  /** what the ingest kept in its warnings table for the run */
  warnings: WarningFacts;
}

export interface RecordedDerivation {
  channel: string;
  referenceElectrode: string | null;
  recordings: number;
}

/** The run's warnings table rows per step, and its recordings per status (recordings.status). */
export interface WarningFacts {
  /** warning rows per step (open, read, scoring, channels, spectra, fit, irasa) */
  byStep: Record<string, number>;
  /** recordings per status: ok, ok-with-warnings, partial-scoring, partial-data, partial-data-and-scoring */
  recordingsByStatus: Record<string, number>;
}

export class ReportInputError extends Error {
  override name = 'ReportInputError';
}

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);
const isPair = (v: unknown): v is [number, number] => Array.isArray(v) && v.length === 2 && isNum(v[0]) && isNum(v[1]);

/** Reads the fields the report states from runs.parameters; fails naming the first missing one. */
export function ingestParameterFacts(p: unknown): IngestParameterFacts {
  const o = (p ?? {}) as Record<string, unknown>;
  const need = (ok: boolean, field: string, v: unknown) => {
    if (!ok) throw new ReportInputError(`ingest parameters: ${field} is missing or invalid (${JSON.stringify(v)})`);
  };
  for (const k of ['epochS', 'segmentS', 'overlap', 'maxFreqHz', 'minEpochs'] as const) need(isNum(o[k]), k, o[k]);
  need(Array.isArray(o.references), 'references', o.references);
  const r = (o.rejection ?? {}) as Record<string, unknown>;
  for (const k of ['maxPeakToPeakUv', 'flatSdUv', 'flatRunS', 'outlierZ'] as const) need(isNum(r[k]), `rejection.${k}`, r[k]);
  need(isPair(r.broadbandHz), 'rejection.broadbandHz', r.broadbandHz);
  need(isPair(r.muscleHz), 'rejection.muscleHz', r.muscleHz);
  const fit = o.fit as IngestParameterFacts['fit'];
  if (fit !== null) need(!!fit && isPair(fit.fitRangeHz), 'fit.fitRangeHz', fit);
  return {
    epochS: o.epochS as number,
    segmentS: o.segmentS as number,
    overlap: o.overlap as number,
    maxFreqHz: o.maxFreqHz as number,
    references: (o.references as string[]).map(String),
    bipolarPairs: Array.isArray(o.bipolarPairs) ? (o.bipolarPairs as string[]).map(String) : [],
    rejection: r as unknown as IngestParameterFacts['rejection'],
    minEpochs: o.minEpochs as number,
    fit,
    multitaper: multitaperFacts(o.multitaper),
  };
}

function multitaperFacts(v: unknown): IngestParameterFacts['multitaper'] {
  const m = v as Record<string, unknown> | undefined;
  return m && isNum(m.nw) && isNum(m.k) ? { nw: m.nw, k: m.k } : null;
}
