/**
 * One recording end to end (Node): EDF → scoring → channel selection → references → 30-s epochs
 * → time-domain rejection → Welch PSD per epoch → spectral outliers within stage → stage averages
 * (mean and median) → aperiodic + peak fits → RecordingBundle for the single writer.
 *
 * Streaming: the EDF is read epoch by epoch into the reader's reused buffers; per epoch and
 * channel only the stored-range spectrum (default 0–45 Hz, Float32) and a few numbers are kept,
 * so memory grows with epochs × channels × bins, not with samples. The computation itself lives
 * in src/core (Welch, reference, epoch-rejection, bands, stage-average, aperiodic-fit).
 */
import path from 'node:path';
import { sleepArchitecture } from '../src/core/hypnogram/architecture.ts';
import { ChannelSelectionError, selectChannels as selectChannelList } from '../src/core/montage/channel-selection.ts';
import { channelPosition } from '../src/core/montage/positions.ts';
import { planReferences, Rereferencer, type MontageChannel, type ReferenceKind, type ReferencePlan } from '../src/core/montage/reference.ts';
import { DEFAULT_REJECTION, spectralOutliers, timeDomainCheck, type RejectionOptions } from '../src/core/quality/epoch-rejection.ts';
import { hannBinCovariance, samplingFloors } from '../src/core/quality/log-power-spread.ts';
import { aperiodicQuality } from '../src/core/quality/aperiodic-quality.ts';
import { cleanEpochs } from '../src/core/quality/clean-epochs.ts';
import { clipping } from '../src/core/quality/clipping.ts';
import { flatChannel } from '../src/core/quality/flat-channel.ts';
import { DEFAULT_MAINS_HUM, mainsHum } from '../src/core/quality/mains-hum.ts';
import { DEFAULT_NARROW_SPIKE, narrowSpikes } from '../src/core/quality/narrow-spikes.ts';
import { outlierShare } from '../src/core/quality/outlier-share.ts';
import { rejectedFraction } from '../src/core/quality/rejected-fraction.ts';
import type { QualityRow } from '../src/core/quality/row.ts';
import { fitSpectrum, type SpectrumFitOptions } from '../src/core/spectrum/aperiodic-fit.ts';
import { BandPowerTable, DEFAULT_BANDS, bandBins, type Band, type BandMethod } from '../src/core/spectrum/bands.ts';
import { averageStage, DEFAULT_MIN_EPOCHS, hannWindow, welchDegreesOfFreedom } from '../src/core/spectrum/stage-average.ts';
import { Welch } from '../src/core/spectrum/welch.ts';
import { Irasa, IRASA_FACTORS } from '../src/core/spectrum/irasa.ts';
import { SCORED_STAGES, type Stage } from '../src/core/stages.ts';
import type { CohortRecording } from './cohort/types.ts';
import { openEdf, type EdfFile, type EdfSignal } from './edf/reader.ts';
import { DEFAULT_SCORING_PARAMS, scoringForRecording, type RecordingScoring, type ScoringParams } from './hypnogram/index.ts';
import type {
  AperiodicRow, BandPowerBlock, ChannelRow, EpochRejection, PeakRow, QualityRowIn, RecordingBundle, SpectrumRow,
} from './store/bundle.ts';
import { runIdentity } from './store/identity.ts';

/** Every parameter of a run (stored as runs.parameters; a change makes a new run). */
export interface IngestParams {
  /** Scoring epoch length, s (default 30, AASM). */
  epochS: number;
  /** Welch segment length, s (default 4). */
  segmentS: number;
  /** Welch overlap, fraction of a segment (default 0.5). */
  overlap: number;
  /** Highest stored frequency, Hz (default 45; lowered to the Nyquist frequency when that is lower). */
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
}

export interface QualityParams {
  /** Flag clipping above this fraction of samples at the digital limits (default 0.001). */
  clippingMaxFraction: number;
  /** Flat channel below this robust SD, µV (default 2); the SD is the median of the epoch SDs. */
  flatMinSdUv: number;
  /** Power-line frequency, Hz; null = the BIDS sidecar's, else detected (default null). */
  lineHz: 50 | 60 | null;
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
    lineHz: null,
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
  return p;
}

/** A failure of one step of one recording (goes to ingest_errors with file, step and field). */
export class PipelineError extends Error {
  override name = 'PipelineError';
  constructor(
    readonly step: string,
    readonly file: string | null,
    readonly field: string | null,
    message: string,
    options?: { cause?: unknown },
  ) {
    // the EDF reader's and the scoring readers' messages already start with the file
    super(file && !message.startsWith(`${file}: `) ? `${file}: ${message}` : message, options);
  }
}

export interface PipelineProgress {
  step: 'read' | 'spectra' | 'irasa';
  done: number;
  total: number;
}

interface Selected {
  signal: EdfSignal;
  montage: MontageChannel;
  name: string;
  toUv: number;
}

/** The analysed signals and their stored names (src/core/montage/channel-selection.ts). */
function selectChannels(edf: EdfFile, rec: CohortRecording, params: IngestParams): Selected[] {
  const signals = edf.header.signals.filter((s) => !s.isAnnotation);
  try {
    return selectChannelList(signals, rec.bids?.channels ?? [], params).map((c) => ({
      signal: signals.find((s) => s.index === c.index)!, montage: c.montage, name: c.name, toUv: c.toUv,
    }));
  } catch (e) {
    if (e instanceof ChannelSelectionError) throw new PipelineError('channels', edf.file, e.field, e.message, { cause: e });
    throw e;
  }
}

async function readHypnogram(edf: EdfFile, rec: CohortRecording, params: IngestParams): Promise<RecordingScoring> {
  try {
    return await scoringForRecording(edf, rec, { ...params.scoring, epochS: params.epochS });
  } catch (e) {
    throw new PipelineError('scoring', rec.scoringPath ?? edf.file, null, e instanceof Error ? e.message : String(e), { cause: e });
  }
}

/** Per output channel of one reference: everything kept per epoch. */
interface OutputState {
  channel: string;
  welch: Welch;
  /** Samples per epoch. */
  length: number;
  /** Per-epoch stored-range PSD, row e, µV²/Hz. */
  spectra: Float32Array;
  hasData: Uint8Array;
  tdReason: Array<'amplitude' | 'flat' | null>;
  tdValue: Float64Array;
  logBroadband: Float64Array;
  logMuscle: Float64Array;
  bandPower: Float32Array;
  /** Mean full-range PSD over time-domain-clean epochs (recorded reference only), µV²/Hz. */
  fullSum: Float64Array | null;
  fullCount: number;
  /** 1 for the epochs kept after every rejection rule (set after the read pass). */
  clean: Uint8Array | null;
}

interface PlanState {
  plan: ReferencePlan;
  rereferencer: Rereferencer;
  outputs: OutputState[];
}

/** What every epoch of one recording shares: the stored range, rejection rules, band tables and scratch. */
interface EpochWork {
  nStored: number;
  rejection: RejectionOptions;
  bandTable: BandPowerTable;
  nBands: number;
  broadBand: BandPowerTable;
  muscleBand: BandPowerTable;
  /** per recorded channel, per epoch: SD in µV */
  epochSd: Float64Array[];
  psd: Float64Array;
  one: Float64Array;
}

/**
 * One epoch of one reference plan: time-domain check, Welch PSD, band powers, full-range sum.
 * A function of its own (not a loop inside processRecording) so its optimised code outlives one
 * recording: a worker reuses it for every recording it processes.
 */
function epochOfPlan(st: PlanState, data: Float32Array[], e: number, w: EpochWork): void {
  const signals = st.rereferencer.apply(data);
  const { psd, one, nStored } = w;
  for (let o = 0; o < st.outputs.length; o++) {
    const out = st.outputs[o];
    const x = signals[o];
    const td = timeDomainCheck(x, 0, out.length, out.welch.fsHz, w.rejection);
    if (st.plan.reference === 'recorded') w.epochSd[st.plan.outputs[o].source][e] = td.sdUv;
    out.hasData[e] = 1;
    out.tdReason[e] = td.reason;
    out.tdValue[e] = td.value ?? NaN;
    out.welch.mean(x, 0, out.length, psd);
    out.spectra.set(psd.subarray(0, nStored), e * nStored);
    w.broadBand.compute(psd, one);
    out.logBroadband[e] = Math.log10(one[0]);
    w.muscleBand.compute(psd, one);
    out.logMuscle[e] = Math.log10(one[0]);
    w.bandTable.compute(psd.subarray(0, nStored), out.bandPower.subarray(e * w.nBands, (e + 1) * w.nBands));
    if (out.fullSum && td.reason === null) {
      const full = out.fullSum;
      for (let b = 0; b < full.length; b++) full[b] += psd[b];
      out.fullCount++;
    }
  }
}

/** sum[k]/count as float32: a mean spectrum from its running sum. */
function dividedBy(sum: Float64Array, count: number): Float32Array {
  const mean = new Float32Array(sum.length);
  for (let k = 0; k < sum.length; k++) mean[k] = sum[k] / count;
  return mean;
}

/** 0, d, 2d, … (n values): epoch onsets, bin frequencies. */
function evenlySpaced(n: number, d: number): Float64Array {
  const v = new Float64Array(n);
  for (let i = 0; i < n; i++) v[i] = i * d;
  return v;
}

/** What the per-output pass after the read shares within one recording: rules, stage index per epoch, the rows collected. */
interface FinishWork {
  params: IngestParams;
  /** per epoch: index into SCORED_STAGES, −1 when not a scored sleep/wake stage */
  stageIdx: Int32Array;
  nGrid: number;
  nStored: number;
  nBands: number;
  /** frequency step of the stored bins, Hz */
  step: number;
  freqs: Float64Array;
  fitRange: [number, number] | null;
  rejections: EpochRejection[];
  spectra: SpectrumRow[];
  aperiodic: AperiodicRow[];
  peaks: PeakRow[];
  quality: QualityRowIn[];
}

/** Epoch band powers of one reference, collected per output before they become typed arrays. */
interface BandPowerColumns {
  channelIdx: number[];
  epoch: number[];
  bandIdx: number[];
  power: number[];
}

/**
 * One output channel of one reference, after the read pass: spectral outliers within stage, the
 * rejection rows, its epoch band powers into `block`, the stage averages (mean and median) and,
 * with fits on, their aperiodic fits. A function of its own, like epochOfPlan: a closure made
 * anew for every recording would be optimised anew for every recording.
 */
function finishOutput(out: OutputState, oi: number, reference: ReferenceKind, block: BandPowerColumns, w: FinishWork): void {
  const { params, stageIdx, nGrid } = w;
  const q = params.quality;
  const eligible = new Uint8Array(nGrid);
  for (let e = 0; e < nGrid; e++) eligible[e] = out.hasData[e] && out.tdReason[e] === null ? 1 : 0;
  const welch = out.welch;
  const K = welch.segmentCount(out.length);
  const floors = samplingFloors(out.spectra, w.nStored, w.step, stageIdx, eligible, SCORED_STAGES.length, params.rejection, hannBinCovariance(welch.nPerSeg, welch.step, K));
  const outliers = spectralOutliers(out.logBroadband, out.logMuscle, stageIdx, eligible, params.rejection.outlierZ, floors);
  const clean = eligible.slice();
  const outlierReason = new Map<number, string>();
  for (const r of outliers) {
    clean[r.epoch] = 0;
    outlierReason.set(r.epoch, r.reason);
  }
  out.clean = clean;
  for (let e = 0; e < nGrid; e++) {
    const reason = out.tdReason[e];
    if (out.hasData[e] && reason) w.rejections.push({ channel: out.channel, reference, epoch: e, reason, value: Number.isFinite(out.tdValue[e]) ? out.tdValue[e] : null });
  }
  for (const r of outliers) w.rejections.push({ channel: out.channel, reference, epoch: r.epoch, reason: r.reason, value: r.value });
  for (let e = 0; e < nGrid; e++) {
    if (!out.hasData[e]) continue;
    for (let b = 0; b < w.nBands; b++) {
      block.channelIdx.push(oi);
      block.epoch.push(e);
      block.bandIdx.push(b);
      block.power.push(out.bandPower[e * w.nBands + b]);
    }
  }
  const nu = welchDegreesOfFreedom(K, hannWindow(welch.nPerSeg), welch.step);
  for (let si = 0; si < SCORED_STAGES.length; si++) {
    const stage = SCORED_STAGES[si];
    const rows: number[] = [];
    for (let e = 0; e < nGrid; e++) if (clean[e] && stageIdx[e] === si) rows.push(e);
    if (reference === 'recorded') {
      const cell = { channel: out.channel, stage };
      let nStage = 0;
      let nJudged = 0;
      const byReason: Record<string, number> = {};
      for (let e = 0; e < nGrid; e++) {
        if (!out.hasData[e] || stageIdx[e] !== si) continue;
        nStage++;
        nJudged += eligible[e];
        const why = out.tdReason[e] ?? (clean[e] ? null : outlierReason.get(e));
        if (why) byReason[why] = (byReason[why] ?? 0) + 1;
      }
      if (nStage > 0) {
        w.quality.push(qualityIn(rejectedFraction(cell, nStage, byReason, { maxFraction: q.rejectedMaxFraction, minEpochs: params.minEpochs }), reference));
        w.quality.push(qualityIn(cleanEpochs(cell, rows.length, { minEpochs: params.minEpochs }, nStage), reference));
        w.quality.push(qualityIn(outlierShare(cell, nJudged, byReason, { outlierZ: params.rejection.outlierZ }), reference));
      }
    }
    const avg = averageStage(out.spectra, w.nStored, rows, nu, params.minEpochs);
    if (!avg) continue;
    for (const averaging of ['mean', 'median'] as const) {
      const power = Float32Array.from(averaging === 'mean' ? avg.mean : avg.median);
      w.spectra.push({
        channel: out.channel, stage, reference, averaging, nEpochs: avg.nEpochs, nSegments: avg.nEpochs * K,
        freqStartHz: 0, freqStepHz: w.step, power, flagged: avg.flagged, flagReason: avg.flagReason,
      });
      if (w.fitRange) fitOne(power, { channel: out.channel, stage, reference, averaging }, w);
    }
  }
}

/** The aperiodic fit of one stage average (with its peaks and fit-quality rows), or a row of empty values when it cannot be fitted. */
function fitOne(power: Float32Array, key: Pick<AperiodicRow, 'channel' | 'stage' | 'reference' | 'averaging'>, w: FinishWork): void {
  const q = w.params.quality;
  const fitRange = w.fitRange!;
  const { fitRangeHz: _r, ...fitOptions } = w.params.fit!;
  let fitQ: { r2: number | null; exponent: number | null } = { r2: null, exponent: null };
  try {
    const fit = fitSpectrum(w.freqs, power, { ...fitOptions, fitRangeHz: fitRange });
    w.aperiodic.push({ ...key, method: fit.method, fitLoHz: fit.fitLoHz, fitHiHz: fit.fitHiHz, offset: fit.offset, exponent: fit.exponent, knee: fit.knee, r2: fit.r2, rmse: fit.rmse, nPeaks: fit.peaks.length });
    for (const p of fit.peaks) w.peaks.push({ ...key, method: fit.method, centerHz: p.centerHz, height: p.height, bandwidthHz: p.bandwidthHz });
    fitQ = fit;
  } catch {
    // a spectrum that cannot be fitted keeps a row with empty values; aperiodicQuality flags it
    w.aperiodic.push({ ...key, method: 'fit', fitLoHz: fitRange[0], fitHiHz: fitRange[1], offset: null, exponent: null, knee: null, r2: null, rmse: null, nPeaks: null });
  }
  if (key.averaging === 'mean') {
    const rows = aperiodicQuality({ channel: key.channel, stage: key.stage }, fitQ, { minR2: q.aperiodicMinR2, exponentRange: q.exponentRange });
    for (const r of rows) w.quality.push(qualityIn(r, key.reference));
  }
}

/**
 * Welch estimators kept across recordings (per sampling rate and parameters): their FFT tables
 * and buffers are built once per worker, not once per recording. Each call of Welch.mean is
 * synchronous, so recordings processed concurrently in one thread can share one.
 */
const welchCache = new Map<string, Welch>();

function sharedWelch(fsHz: number, segmentS: number, overlap: number, maxFreqHz: number): Welch {
  const key = `${fsHz}|${segmentS}|${overlap}|${maxFreqHz}`;
  let w = welchCache.get(key);
  if (!w) {
    w = new Welch(fsHz, { segmentS, overlap, maxFreqHz });
    welchCache.set(key, w);
  }
  return w;
}

/** Time-domain measures of one recorded channel over the kept epochs, for the quality metrics. */
export interface ChannelMeasures {
  channel: string;
  /** Fraction of samples at the physical (= digital) limits. */
  clippingFraction: number;
  /** Median over kept epochs of the epoch SD, µV. */
  medianSdUv: number;
  /** Mean PSD 0 … fullMaxHz over time-domain-clean epochs (mains-hum metric), µV²/Hz. */
  fullSpectrum: Float32Array;
  fullStepHz: number;
}

/** A recording's EDF, open, with the SHA-256 of its file. */
export interface OpenedRecording {
  edf: EdfFile;
  sha256: string;
}

/** Opens a recording's EDF and hashes the file in the same reads as its annotations where it can. */
export async function openRecording(rec: CohortRecording): Promise<OpenedRecording> {
  let edf: EdfFile;
  try {
    edf = await openEdf(rec.recordingPath, { sha256: true });
  } catch (e) {
    throw new PipelineError('open', rec.recordingPath, (e as { field?: string }).field ?? null, e instanceof Error ? e.message : String(e), { cause: e });
  }
  return { edf, sha256: edf.sha256 as string };
}

/**
 * Processes one recording into the bundle the store writes. `runId` defaults to the identity of
 * `params` (the store derives the same from the same parameters in beginRun).
 */
export async function processRecording(
  rec: CohortRecording,
  params: IngestParams,
  onProgress?: (p: PipelineProgress) => void,
  runId: string = runIdentity(params).runId,
): Promise<RecordingBundle & { measures: ChannelMeasures[] }> {
  return processOpened(rec, await openRecording(rec), params, onProgress, runId);
}

/** The same for a recording opened by openRecording; closes its EDF. */
export async function processOpened(
  rec: CohortRecording,
  opened: OpenedRecording,
  params: IngestParams,
  onProgress?: (p: PipelineProgress) => void,
  runId: string = runIdentity(params).runId,
): Promise<RecordingBundle & { measures: ChannelMeasures[] }> {
  const file = rec.recordingPath;
  const edf = opened.edf;
  try {
    const scoring = await readHypnogram(edf, rec, params);
    const hyp = scoring.hypnogram;
    const epochS = hyp.epochS;
    const selected = selectChannels(edf, rec, params);
    const { plans, skips } = planReferences(selected.map((s) => s.montage), { references: params.references, bipolarPairs: params.bipolarPairs });
    const recordedNames = selected.map((s) => s.name);

    const step = 1 / params.segmentS;
    const nyquist = Math.min(...selected.map((s) => s.signal.fsHz / 2));
    const storedMaxHz = Math.min(params.maxFreqHz, nyquist);
    const nStored = Math.floor(storedMaxHz / step + 1e-9) + 1;
    const fullMaxHz = Math.min(params.qualityMaxFreqHz, nyquist);
    const bands = params.bands.filter((b) => bandBins(b, 0, step, nStored) !== null);
    const bandTable = new BandPowerTable(bands, 0, step, nStored, params.bandMethod);
    const { broadbandHz, muscleHz } = params.rejection;
    const broadBand = new BandPowerTable([{ name: 'broadband', loHz: broadbandHz[0], hiHz: Math.min(broadbandHz[1], fullMaxHz) }], 0, step, 1 << 20, 'mean');
    const muscleBand = new BandPowerTable([{ name: 'muscle', loHz: muscleHz[0], hiHz: Math.min(muscleHz[1], fullMaxHz) }], 0, step, 1 << 20, 'mean');

    const nGrid = Math.max(0, Math.ceil(edf.durationS / epochS - 1e-6));
    const welchByFs = new Map<number, Welch>();
    const welchFor = (fs: number) => {
      let w = welchByFs.get(fs);
      if (!w) {
        try {
          w = sharedWelch(fs, params.segmentS, params.overlap, fullMaxHz);
        } catch (e) {
          throw new PipelineError('spectra', file, 'segment length', (e as Error).message, { cause: e });
        }
        welchByFs.set(fs, w);
      }
      return w;
    };
    const states: PlanState[] = plans.map((plan) => {
      const outputs = plan.outputs.map((o): OutputState => {
        const fs = selected[o.source].signal.fsHz;
        const welch = welchFor(fs);
        return {
          channel: plan.reference === 'recorded' ? recordedNames[o.source] : o.channel,
          welch,
          length: Math.round(fs * epochS),
          spectra: new Float32Array(nGrid * nStored),
          hasData: new Uint8Array(nGrid),
          tdReason: new Array(nGrid).fill(null),
          tdValue: new Float64Array(nGrid),
          logBroadband: new Float64Array(nGrid).fill(NaN),
          logMuscle: new Float64Array(nGrid).fill(NaN),
          bandPower: new Float32Array(nGrid * bands.length),
          fullSum: plan.reference === 'recorded' ? new Float64Array(welch.nBins) : null,
          fullCount: 0,
          clean: null,
        };
      });
      return { plan, rereferencer: new Rereferencer(plan, plan.fsHz ? Math.round(plan.fsHz * epochS) : 0), outputs };
    });

    const stages: Stage[] = new Array(nGrid);
    for (let e = 0; e < nGrid; e++) stages[e] = hyp.stages[e] ?? 'unscored';
    const dropReason: (string | null)[] = new Array(nGrid).fill(null);
    const onsetS = evenlySpaced(nGrid, epochS);
    const clipped = new Float64Array(selected.length);
    let epochsSeen = 0;
    const epochSd: Float64Array[] = []; // filled by push, not .map(): see readEpochs' epoch buffers
    for (let c = 0; c < selected.length; c++) epochSd.push(new Float64Array(nGrid).fill(NaN));
    const epochWork: EpochWork = {
      nStored, rejection: params.rejection, bandTable, nBands: bands.length, broadBand, muscleBand, epochSd,
      psd: new Float64Array(Math.max(...[...welchByFs.values()].map((w) => w.nBins))),
      one: new Float64Array(1),
    };

    let done = 0;
    try {
      for await (const block of edf.readEpochs({ signals: selected.map((s) => s.signal.index), epochS })) {
        const e = block.epoch;
        if (e >= nGrid) break;
        if (block.dropReason || !block.data) {
          dropReason[e] = block.dropReason === 'end' ? 'recording-end' : 'gap';
          continue;
        }
        const data = block.data;
        for (let c = 0; c < selected.length; c++) {
          clipped[c] += block.atDigitalLimits![c]; // samples at the digital limits
          const k = selected[c].toUv;
          if (k !== 1) {
            const x = data[c];
            for (let i = 0; i < x.length; i++) x[i] *= k;
          }
        }
        epochsSeen += 1;
        for (const st of states) epochOfPlan(st, data, e, epochWork);
        done++;
        if (onProgress && (done & 15) === 0) onProgress({ step: 'read', done: e + 1, total: nGrid });
      }
    } catch (e) {
      if (e instanceof PipelineError) throw e;
      throw new PipelineError('read', file, (e as { field?: string }).field ?? null, e instanceof Error ? e.message : String(e), { cause: e });
    }
    onProgress?.({ step: 'read', done: nGrid, total: nGrid });

    // ---- per reference and channel: outliers within stage, stage averages, fits ----
    const stageIdx = Int32Array.from(stages, (s) => SCORED_STAGES.indexOf(s as (typeof SCORED_STAGES)[number]));
    const freqs = evenlySpaced(nStored, step);
    const finish: FinishWork = {
      params, stageIdx, nGrid, nStored, nBands: bands.length, step, freqs,
      fitRange: params.fit ? [params.fit.fitRangeHz[0], Math.min(params.fit.fitRangeHz[1], storedMaxHz)] : null,
      rejections: [], spectra: [], aperiodic: [], peaks: [], quality: [],
    };
    const { rejections, spectra, aperiodic, peaks, quality } = finish;
    const fitRange = finish.fitRange;
    const q = params.quality;
    const bandPowers: BandPowerBlock[] = [];
    let outputsDone = 0;
    const outputsTotal = states.reduce((s, st) => s + st.outputs.length, 0);
    for (const st of states) {
      const reference = st.plan.reference;
      const block: BandPowerColumns = { channelIdx: [], epoch: [], bandIdx: [], power: [] };
      for (let oi = 0; oi < st.outputs.length; oi++) {
        finishOutput(st.outputs[oi], oi, reference, block, finish);
        outputsDone++;
        onProgress?.({ step: 'spectra', done: outputsDone, total: outputsTotal });
      }
      bandPowers.push({
        reference,
        channels: st.outputs.map((o) => o.channel),
        bands: bands.map((b) => b.name),
        channelIdx: Int32Array.from(block.channelIdx),
        epoch: Int32Array.from(block.epoch),
        bandIdx: Int32Array.from(block.bandIdx),
        power: Float32Array.from(block.power),
      });
    }

    if (params.irasa) {
      onProgress?.({ step: 'irasa', done: 0, total: nGrid });
      aperiodic.push(...(await irasaPass(edf, selected.map((s) => s.signal.index), selected.map((s) => s.toUv), states, stageIdx, epochS, params, fitRange, nGrid, (d) => onProgress?.({ step: 'irasa', done: d, total: nGrid }))));
    }

    const recordedState = states.find((s) => s.plan.reference === 'recorded');
    const measures: ChannelMeasures[] = selected.map((s, c) => {
      const out = recordedState?.outputs.find((_, o) => recordedState.plan.outputs[o].source === c);
      const sds = epochSd[c].filter(Number.isFinite).sort();
      // a channel without clean epochs (flat all night, say) has no spectrum to assess
      const fullSpectrum = out?.fullSum && out.fullCount > 0 ? dividedBy(out.fullSum, out.fullCount) : new Float32Array(0);
      return {
        channel: s.name,
        clippingFraction: epochsSeen > 0 ? clipped[c] / (epochsSeen * Math.round(s.signal.fsHz * epochS)) : 0,
        medianSdUv: sds.length ? sds[Math.floor(sds.length / 2)] : NaN,
        fullSpectrum,
        fullStepHz: step,
      };
    });

    const lineHz = q.lineHz ?? (rec.bids?.powerLineHz === 50 || rec.bids?.powerLineHz === 60 ? rec.bids.powerLineHz : null);
    for (const m of measures) {
      const cell = { channel: m.channel, stage: null };
      const sel = selected.find((s) => s.name === m.channel)!;
      const nSamples = epochsSeen * Math.round(sel.signal.fsHz * epochS);
      quality.push(qualityIn(clipping(cell, nSamples, Math.round(m.clippingFraction * nSamples), { maxFraction: q.clippingMaxFraction }), 'recorded'));
      if (Number.isFinite(m.medianSdUv)) quality.push(qualityIn(flatChannel(cell, m.medianSdUv, { minSdUv: q.flatMinSdUv }), 'recorded'));
      if (m.fullSpectrum.length > 0) {
        const f = evenlySpaced(m.fullSpectrum.length, m.fullStepHz);
        // a known line the spectrum cannot reach (60 Hz at fs 128) is not assessable: pass null
        const reach = f[f.length - 1] >= (lineHz ?? 0) + DEFAULT_MAINS_HUM.outerHz;
        quality.push(qualityIn(mainsHum(cell, f, m.fullSpectrum, { ...DEFAULT_MAINS_HUM, lineHz: reach ? lineHz : null, thresholdDb: q.mainsThresholdDb }), 'recorded'));
        // the mains lines (50/60 ± 2 Hz) have their own metric and are left out of the spike search
        const spikes = narrowSpikes(cell, f, m.fullSpectrum, {
          ...DEFAULT_NARROW_SPIKE, heightLog10: q.narrowHeightLog10, maxWidthHz: q.narrowMaxWidthHz, excludeHz: [[48, 52], [58, 62]],
        });
        quality.push(qualityIn(spikes, 'recorded'));
      }
    }

    const arch = sleepArchitecture(stages, epochS, scoring.lights);
    const channels: ChannelRow[] = selected.map((s) => {
      const pos = channelPosition(s.name);
      return {
        channel: s.name, type: s.montage.type, unit: 'µV', fsHz: s.signal.fsHz, prefilter: s.signal.prefilter.trim() || null,
        x: pos?.x ?? null, y: pos?.y ?? null, z: pos?.z ?? null, label: s.signal.label.trim(), referenceElectrode: s.montage.reference,
        physicalMin: s.signal.physicalMin, physicalMax: s.signal.physicalMax, digitalMin: s.signal.digitalMin, digitalMax: s.signal.digitalMax,
      };
    });
    const nDropped = dropReason.filter((d) => d !== null).length;
    const bundle = {
      runId,
      recording: {
        subject: rec.subject, session: rec.session, fileName: path.basename(file), fileSha256: opened.sha256, durationS: edf.durationS,
        status: 'ok', edfVariant: edf.header.variant, scoringSource: hyp.source, epochLengthS: epochS, nEpochs: nGrid,
        nEpochsDropped: nDropped, tstMin: arch.totalSleepTimeMin, sePct: arch.sleepEfficiencyPct, solMin: arch.sleepOnsetLatencyMin,
        stageMin: arch.minutesPerStage,
        scoringShiftS: scoring.shiftS, lightsOffS: scoring.lights.offS, lightsOnS: scoring.lights.onS, lightsSource: scoring.lights.source,
        trtMin: arch.totalRecordingTimeMin, wasoMin: arch.wasoMin, remLatencyMin: arch.remLatencyMin,
      },
      channels,
      epochs: { onsetS, stage: stages, dropReason },
      rejections,
      spectra,
      bandPowers,
      aperiodic,
      peaks,
      quality,
      referenceSkips: skips,
      measures,
    };
    return bundle;
  } finally {
    await edf.close();
  }
}

/**
 * IRASA over a second read of the recording: every clean epoch of a stage is added to that
 * stage's estimator (per reference and channel), then each estimator's power-law fit becomes an
 * aperiodic row with method 'irasa'.
 */
async function irasaPass(
  edf: EdfFile,
  signals: number[],
  toUv: number[],
  states: PlanState[],
  stageIdx: Int32Array,
  epochS: number,
  params: IngestParams,
  fitRange: [number, number] | null,
  nGrid: number,
  onEpoch: (done: number) => void,
): Promise<AperiodicRow[]> {
  const [lo, hi] = fitRange ?? [1, 40];
  const estimators = states.map((st) =>
    st.outputs.map((out) => {
      const cap = out.welch.fsHz / (2 * Math.max(...(params.irasa!.resamplingFactors ?? IRASA_FACTORS)));
      const range: [number, number] = [lo, Math.min(hi, Math.floor(cap * 4) / 4)];
      return SCORED_STAGES.map(() => new Irasa(out.welch.fsHz, { segmentS: params.segmentS, overlap: params.overlap, fitRangeHz: range, resamplingFactors: params.irasa!.resamplingFactors }));
    }),
  );
  for await (const block of edf.readEpochs({ signals, epochS })) {
    const e = block.epoch;
    if (e >= nGrid) break;
    if (!block.data || stageIdx[e] < 0) continue;
    const data = block.data;
    for (let c = 0; c < data.length; c++) if (toUv[c] !== 1) for (let i = 0; i < data[c].length; i++) data[c][i] *= toUv[c];
    states.forEach((st, si) => {
      const x = st.rereferencer.apply(data);
      st.outputs.forEach((out, oi) => {
        if (out.clean?.[e]) estimators[si][oi][stageIdx[e]].add(x[oi], 0, out.length);
      });
    });
    if ((e & 15) === 0) onEpoch(e);
  }
  const rows: AperiodicRow[] = [];
  states.forEach((st, si) =>
    st.outputs.forEach((out, oi) =>
      SCORED_STAGES.forEach((stage, g) => {
        const est = estimators[si][oi][g];
        let fit: ReturnType<Irasa['result']>['fit'] | null = null;
        try {
          fit = est.result().fit;
        } catch {
          return; // no clean epoch of this stage (or too little signal): no row, as for spectra
        }
        rows.push({
          channel: out.channel, stage, reference: st.plan.reference, averaging: 'mean', method: 'irasa',
          fitLoHz: fit.fitLoHz, fitHiHz: fit.fitHiHz, offset: fit.offset, exponent: fit.exponent, knee: 0, r2: fit.r2, rmse: fit.rmse, nPeaks: null,
        });
      }),
    ),
  );
  return rows;
}

/** A quality row of src/core/quality as the bundle holds it. */
function qualityIn(r: QualityRow, reference: ReferenceKind): QualityRowIn {
  return { channel: r.channel, stage: r.stage, metric: r.metric, value: r.value, flagged: r.flagged, reason: r.reason, severity: r.severity, reference };
}

/** The ArrayBuffers of a bundle's typed arrays, for a zero-copy postMessage transfer. */
export function bundleTransferList(bundle: RecordingBundle & { measures?: ChannelMeasures[] }): ArrayBuffer[] {
  const buffers = new Set<ArrayBuffer>();
  const add = (a: { buffer: ArrayBufferLike }) => {
    if (a.buffer instanceof ArrayBuffer) buffers.add(a.buffer);
  };
  add(bundle.epochs.onsetS);
  for (const s of bundle.spectra) add(s.power);
  for (const b of bundle.bandPowers) [b.channelIdx, b.epoch, b.bandIdx, b.power].forEach(add);
  for (const m of bundle.measures ?? []) add(m.fullSpectrum);
  return [...buffers];
}
