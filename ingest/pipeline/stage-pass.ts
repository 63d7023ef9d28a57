/**
 * The stage pass, per reference and output channel after the epoch pass: spectral outliers
 * within stage, the rejection rows, the epoch band powers, the stage averages (mean and median)
 * with their epoch-count quality rows, and, with fits on, the aperiodic and peak fits.
 */
import type { ReferenceKind } from '../../src/core/montage/reference.ts';
import { spectralOutliers } from '../../src/core/quality/epoch-rejection.ts';
import { hannBinCovariance, samplingFloors } from '../../src/core/quality/log-power-spread.ts';
import { outlierShare } from '../../src/core/quality/outlier-share.ts';
import { aperiodicQuality } from '../../src/core/quality/aperiodic-quality.ts';
import { cleanEpochs } from '../../src/core/quality/clean-epochs.ts';
import { rejectedFraction } from '../../src/core/quality/rejected-fraction.ts';
import { fitSpectrum } from '../../src/core/spectrum/aperiodic-fit.ts';
import { averageStage, hannWindow, taperDegreesOfFreedom, welchDegreesOfFreedom } from '../../src/core/spectrum/stage-average.ts';
import { SCORED_STAGES, type Stage } from '../../src/core/stages.ts';
import type { AperiodicRow, BandPowerBlock, Estimator, EpochRejection, PeakRow, QualityRowIn, SpectrumRow } from '../store/bundle.ts';
import type { OutputState, PlanState } from './epoch-pass.ts';
import type { IngestParams } from './params.ts';
import { qualityIn } from './recording-quality.ts';

/** What the per-output pass after the read shares within one recording: rules, stage index per epoch, the rows collected. */
export interface FinishWork {
  params: IngestParams;
  /** per epoch: index into SCORED_STAGES, −1 when not a scored sleep/wake stage */
  stageIdx: Int32Array;
  nGrid: number;
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
 * with fits on, their aperiodic fits — of the Welch estimate and, when asked for, of the
 * multitaper estimate over the same clean epochs (rejection and quality rows stay on Welch). A function of its own, like epochOfPlan: a closure made
 * anew for every recording would be optimised anew for every recording.
 */
function finishOutput(out: OutputState, oi: number, reference: ReferenceKind, block: BandPowerColumns, w: FinishWork): void {
  const { params, stageIdx, nGrid } = w;
  const q = params.quality;
  const eligible = new Uint8Array(nGrid);
  for (let e = 0; e < nGrid; e++) eligible[e] = out.hasData[e] && out.tdReason[e] === null ? 1 : 0;
  const grid = out.grid;
  const welch = grid.welch;
  const K = welch.segmentCount(out.length);
  // the outlier rule's spread is floored by the sampling spread of one epoch's log band power (src/core/quality/log-power-spread.ts)
  const floors = samplingFloors(
    out.spectra,
    grid.nStored,
    grid.step,
    stageIdx,
    eligible,
    SCORED_STAGES.length,
    grid.rejection,
    hannBinCovariance(welch.nPerSeg, welch.step, K),
  );
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
    if (out.hasData[e] && reason)
      w.rejections.push({ channel: out.channel, reference, epoch: e, reason, value: Number.isFinite(out.tdValue[e]) ? out.tdValue[e] : null });
  }
  for (const r of outliers) w.rejections.push({ channel: out.channel, reference, epoch: r.epoch, reason: r.reason, value: r.value });
  const nBands = grid.bandIdx.length;
  for (let e = 0; e < nGrid; e++) {
    if (!out.hasData[e]) continue;
    for (let b = 0; b < nBands; b++) {
      block.channelIdx.push(oi);
      block.epoch.push(e);
      block.bandIdx.push(grid.bandIdx[b]);
      block.power.push(out.bandPower[e * nBands + b]);
    }
  }
  const nu = welchDegreesOfFreedom(K, hannWindow(welch.nPerSeg), welch.step);
  const mt = grid.multitaper;
  // 2K degrees of freedom per segment, less for overlapping segments (stage-average.ts)
  const nuMt = mt && out.mtSpectra ? taperDegreesOfFreedom(K, mt.slepian.tapers, mt.step) : 0;
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
    storeStage(out, out.spectra, nu, 'welch', stage, reference, rows, K, w);
    if (out.mtSpectra) storeStage(out, out.mtSpectra, nuMt, 'multitaper', stage, reference, rows, K, w);
  }
}

/** The mean and median stage averages of one estimator's epoch spectra, as spectra rows, and their fits. */
function storeStage(
  out: OutputState,
  spectra: Float32Array,
  nu: number,
  estimator: Estimator,
  stage: Stage,
  reference: ReferenceKind,
  rows: number[],
  K: number,
  w: FinishWork,
): void {
  const grid = out.grid;
  const avg = averageStage(spectra, grid.nStored, rows, nu, w.params.minEpochs);
  if (!avg) return;
  for (const averaging of ['mean', 'median'] as const) {
    const power = Float32Array.from(averaging === 'mean' ? avg.mean : avg.median);
    w.spectra.push({
      channel: out.channel,
      stage,
      reference,
      averaging,
      estimator,
      nEpochs: avg.nEpochs,
      nSegments: avg.nEpochs * K,
      freqStartHz: 0,
      freqStepHz: grid.step,
      power,
      flagged: avg.flagged,
      flagReason: avg.flagReason,
    });
    if (grid.fitRange) fitOne(power, grid.freqs, grid.fitRange, { channel: out.channel, stage, reference, averaging, estimator }, w);
  }
}

/** The aperiodic fit of one stage average (with its peaks and fit-quality rows), or a row of empty values when it cannot be fitted. */
function fitOne(
  power: Float32Array,
  freqs: Float64Array,
  fitRange: [number, number],
  key: Pick<AperiodicRow, 'channel' | 'stage' | 'reference' | 'averaging' | 'estimator'>,
  w: FinishWork,
): void {
  const q = w.params.quality;
  const { fitRangeHz: _r, ...fitOptions } = w.params.fit!;
  let fitQ: { r2: number | null; exponent: number | null } = { r2: null, exponent: null };
  try {
    const fit = fitSpectrum(freqs, power, { ...fitOptions, fitRangeHz: fitRange });
    w.aperiodic.push({
      ...key,
      method: fit.method,
      fitLoHz: fit.fitLoHz,
      fitHiHz: fit.fitHiHz,
      offset: fit.offset,
      exponent: fit.exponent,
      knee: fit.knee,
      r2: fit.r2,
      rmse: fit.rmse,
      nPeaks: fit.peaks.length,
    });
    for (const p of fit.peaks) w.peaks.push({ ...key, method: fit.method, centerHz: p.centerHz, height: p.height, bandwidthHz: p.bandwidthHz });
    fitQ = fit;
  } catch {
    // a spectrum that cannot be fitted keeps a row with empty values; aperiodicQuality flags it
    w.aperiodic.push({
      ...key,
      method: 'fit',
      fitLoHz: fitRange[0],
      fitHiHz: fitRange[1],
      offset: null,
      exponent: null,
      knee: null,
      r2: null,
      rmse: null,
      nPeaks: null,
    });
  }
  // fit-quality rows from the Welch fits only: the quality screen reads Welch (one row per metric and cell)
  if (key.averaging === 'mean' && key.estimator === 'welch') {
    const rows = aperiodicQuality({ channel: key.channel, stage: key.stage }, fitQ, { minR2: q.aperiodicMinR2, exponentRange: q.exponentRange });
    for (const r of rows) w.quality.push(qualityIn(r, key.reference));
  }
}

/** Every output of every plan through finishOutput; onOutput(done, total) after each. */
export function stagePass(
  states: readonly PlanState[],
  w: FinishWork,
  bandNames: readonly string[],
  onOutput: (done: number, total: number) => void,
): BandPowerBlock[] {
  const bandPowers: BandPowerBlock[] = [];
  let outputsDone = 0;
  const outputsTotal = states.reduce((s, st) => s + st.outputs.length, 0);
  for (const st of states) {
    const reference = st.plan.reference;
    const block: BandPowerColumns = { channelIdx: [], epoch: [], bandIdx: [], power: [] };
    for (let oi = 0; oi < st.outputs.length; oi++) {
      finishOutput(st.outputs[oi], oi, reference, block, w);
      outputsDone++;
      onOutput(outputsDone, outputsTotal);
    }
    bandPowers.push({
      reference,
      channels: st.outputs.map((o) => o.channel),
      bands: [...bandNames],
      channelIdx: Int32Array.from(block.channelIdx),
      epoch: Int32Array.from(block.epoch),
      bandIdx: Int32Array.from(block.bandIdx),
      power: Float32Array.from(block.power),
    });
  }
  return bandPowers;
}
