/** Every parameter of an ingest run, their defaults, and filling the defaults in. */
import { DEFAULT_REJECTION, type RejectionOptions } from '../../src/core/quality/epoch-rejection.ts';
import type { ReferenceKind } from '../../src/core/montage/reference.ts';
import { DEFAULT_MAINS_HUM } from '../../src/core/quality/mains-hum.ts';
import { DEFAULT_NARROW_SPIKE } from '../../src/core/quality/narrow-spikes.ts';
import type { SpectrumFitOptions } from '../../src/core/spectrum/aperiodic-fit.ts';
import { DEFAULT_BANDS, type Band, type BandMethod } from '../../src/core/spectrum/bands.ts';
import { DEFAULT_MIN_EPOCHS } from '../../src/core/spectrum/stage-average.ts';
import { DEFAULT_SCORING_PARAMS, type ScoringParams } from '../hypnogram/index.ts';
import { PipelineError } from './error.ts';

/** Every parameter of a run (stored as runs.parameters; a change makes a new run). */
export interface IngestParams {
  /** Scoring epoch length, s (default 30, AASM). */
  epochS: number;
  /** Welch segment length, s (default 4). */
  segmentS: number;
  /** Welch overlap, fraction of a segment (default 0.5). */
  overlap: number;
  /** Highest stored frequency, Hz (default 45); each channel at most its own Nyquist frequency (ingest/pipeline/grid.ts). */
  maxFreqHz: number;
  /** Highest frequency of the full-range spectrum used for the mains-hum metric, Hz (default 70). */
  qualityMaxFreqHz: number;
  /** Channel types selected when no include list is given (default ['EEG']). */
  channelTypes: string[];
  /** Labels or electrode names to take whatever their type (empty: by type). */
  includeChannels: string[];
  /** Labels or electrode names to leave out. */
  excludeChannels: string[];
  references: ReferenceKind[];
  bipolarPairs: string[];
  rejection: RejectionOptions;
  /** Stages with fewer clean epochs are flagged 'too-few-epochs' (default 10 = 5 min). */
  minEpochs: number;
  bands: Band[];
  bandMethod: BandMethod;
  /** Aperiodic + peak fit of every stored spectrum; null to skip. */
  fit: (SpectrumFitOptions & { fitRangeHz: [number, number] }) | null;
  /**
   * IRASA aperiodic estimate (Wen & Liu 2016) per channel, stage and reference from the clean
   * epochs' time series, stored with method 'irasa' and averaging 'mean'; null to skip (default).
   * Its fit range is the fit's, capped at fs/(2·h_max) (stored in fit_hi_hz).
   */
  irasa: { resamplingFactors?: number[] } | null;
  /** Thresholds of the per-recording quality metrics (src/core/quality; defaults there). */
  quality: QualityParams;
  /** Scoring: label map, unknown labels, trimming outside the recording, lights texts (ingest/hypnogram/recording.ts). */
  scoring: ScoringParams;
  /**
   * A multitaper estimate beside Welch's (src/core/spectrum/multitaper.ts), on the same segments
   * and grid, stored with estimator 'multitaper' with its stage averages and fits; absent: Welch
   * only (default, and then absent from runs.parameters, so earlier runs keep their identity).
   * Epoch rejection, band powers and quality stay on Welch.
   */
  multitaper?: MultitaperParams;
  /**
   * Each epoch's Welch spectrum of every channel (recorded reference) up to maxHz, log10 power
   * quantised to 16 bits, in epoch_spectra (ingest/pipeline/epoch-spectra.ts); absent: not stored (default).
   */
  epochSpectra?: { maxHz: number };
}

/** Time-half-bandwidth NW and number of tapers K of the multitaper estimate. */
export interface MultitaperParams {
  nw: number;
  k: number;
}

export interface QualityParams {
  /** Flag clipping above this fraction of samples at the digital limits (default 0.001). */
  clippingMaxFraction: number;
  /** Flat channel below this robust SD, µV (default 2); the SD is the median of the epoch SDs. */
  flatMinSdUv: number;
  /**
   * Power-line frequencies that may be present, Hz (default [50, 60]). One given: the mains-hum
   * metric's line; both: the line is the BIDS sidecar's, else detected. Each is left out of the
   * narrow-spike search (± mainsHalfWidthHz), as it has its own metric.
   */
  mainsHz: (50 | 60)[];
  /** Half-width of each mains line left out of the narrow-spike search, Hz (default 2). */
  mainsHalfWidthHz: number;
  /** Flag mains hum above this ratio, dB (default 6). */
  mainsThresholdDb: number;
  /** Narrow spikes: minimum excess, log10 units (default 0.5), widest narrow width, Hz (default 0.75). */
  narrowHeightLog10: number;
  narrowMaxWidthHz: number;
  /** Flag a stage with more than this fraction of its epochs rejected (default 0.3). */
  rejectedMaxFraction: number;
  /** Flag fits with R² below this (default 0.9) or an exponent outside this range (default 0–4). */
  aperiodicMinR2: number;
  exponentRange: [number, number];
}

export const DEFAULT_INGEST_PARAMS: Readonly<IngestParams> = {
  epochS: 30,
  segmentS: 4,
  overlap: 0.5,
  maxFreqHz: 45,
  qualityMaxFreqHz: 70,
  channelTypes: ['EEG'],
  includeChannels: [],
  excludeChannels: [],
  references: ['recorded'],
  bipolarPairs: [],
  rejection: { ...DEFAULT_REJECTION },
  minEpochs: DEFAULT_MIN_EPOCHS,
  bands: DEFAULT_BANDS.map((b) => ({ ...b })),
  bandMethod: 'mean',
  fit: { fitRangeHz: [1, 40], aperiodicForm: 'power-law' },
  irasa: null,
  quality: {
    clippingMaxFraction: 0.001,
    flatMinSdUv: 2,
    mainsHz: [50, 60],
    mainsHalfWidthHz: 2,
    mainsThresholdDb: DEFAULT_MAINS_HUM.thresholdDb,
    narrowHeightLog10: DEFAULT_NARROW_SPIKE.heightLog10,
    narrowMaxWidthHz: DEFAULT_NARROW_SPIKE.maxWidthHz,
    rejectedMaxFraction: 0.3,
    aperiodicMinR2: 0.9,
    exponentRange: [0, 4],
  },
  scoring: DEFAULT_SCORING_PARAMS,
};

/** Fills defaults; the result is plain JSON (it identifies the run). */
export function resolveIngestParams(partial: Partial<IngestParams> = {}): IngestParams {
  const p: IngestParams = {
    ...structuredClone(DEFAULT_INGEST_PARAMS as IngestParams),
    ...structuredClone(partial),
    rejection: { ...DEFAULT_REJECTION, ...(partial.rejection ?? {}) },
    quality: { ...DEFAULT_INGEST_PARAMS.quality, ...(partial.quality ?? {}) },
    scoring: { ...structuredClone(DEFAULT_SCORING_PARAMS as ScoringParams), ...structuredClone(partial.scoring ?? {}) },
  };
  const { mainsHz, mainsHalfWidthHz } = p.quality;
  if (mainsHz.length === 0 || mainsHz.some((f) => f !== 50 && f !== 60) || new Set(mainsHz).size !== mainsHz.length) {
    throw new PipelineError('parameters', null, 'quality.mainsHz', `mains frequencies must be 50, 60 or both, got [${mainsHz.join(', ')}]`);
  }
  if (!(mainsHalfWidthHz > 0))
    throw new PipelineError('parameters', null, 'quality.mainsHalfWidthHz', `mains half-width must be positive, got ${mainsHalfWidthHz} Hz`);
  if (p.multitaper) {
    const { nw, k } = p.multitaper;
    if (!(nw >= 1)) throw new PipelineError('parameters', null, 'multitaper.nw', `time-half-bandwidth NW must be at least 1, got ${nw}`);
    if (!(Number.isInteger(k) && k >= 1 && k <= 2 * nw))
      throw new PipelineError('parameters', null, 'multitaper.k', `number of tapers K must be a whole number from 1 to 2NW = ${2 * nw}, got ${k}`);
  }
  if (p.epochSpectra && !(p.epochSpectra.maxHz > 0))
    throw new PipelineError('parameters', null, 'epochSpectra.maxHz', `epoch spectra need a positive top frequency, got ${p.epochSpectra.maxHz} Hz`);
  return p;
}
