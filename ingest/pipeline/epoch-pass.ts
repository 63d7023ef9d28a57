/**
 * The epoch pass: one read of the recording, epoch by epoch; per reference plan and output
 * channel, the time-domain check, the Welch PSD of the stored range, the rejection rules' log
 * powers, the epoch band powers and (recorded reference) the running full-range sum.
 */
import { Rereferencer, type ReferencePlan } from '../../src/core/montage/reference.ts';
import { timeDomainCheck } from '../../src/core/quality/epoch-rejection.ts';
import type { EdfFile } from '../edf/reader.ts';
import type { Selected } from './channels.ts';
import { PipelineError } from './error.ts';
import type { FrequencyGrid } from './grid.ts';

/** Per output channel of one reference: everything kept per epoch. */
export interface OutputState {
  channel: string;
  /** The grid of the channel's sampling rate: its Welch estimator, stored range, bands and rules. */
  grid: FrequencyGrid;
  /** Samples per epoch. */
  length: number;
  /** Per-epoch stored-range PSD, row e, µV²/Hz (grid.nStored bins a row). */
  spectra: Float32Array;
  hasData: Uint8Array;
  tdReason: Array<'amplitude' | 'flat' | null>;
  tdValue: Float64Array;
  logBroadband: Float64Array;
  logMuscle: Float64Array;
  /** Per epoch, the powers of the grid's bands (grid.bandIdx). */
  bandPower: Float32Array;
  /** Mean full-range PSD over time-domain-clean epochs (recorded reference only), µV²/Hz. */
  fullSum: Float64Array | null;
  fullCount: number;
  /** 1 for the epochs kept after every rejection rule (set after the read pass). */
  clean: Uint8Array | null;
}

export interface PlanState {
  plan: ReferencePlan;
  rereferencer: Rereferencer;
  outputs: OutputState[];
}

/** What every epoch of one recording shares: scratch and the recorded channels' epoch SDs. */
interface EpochWork {
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
  const { psd, one } = w;
  for (let o = 0; o < st.outputs.length; o++) {
    const out = st.outputs[o];
    const g = out.grid;
    const nStored = g.nStored;
    const nBands = g.bandIdx.length;
    const x = signals[o];
    const td = timeDomainCheck(x, 0, out.length, g.fsHz, g.rejection);
    if (st.plan.reference === 'recorded') w.epochSd[st.plan.outputs[o].source][e] = td.sdUv;
    out.hasData[e] = 1;
    out.tdReason[e] = td.reason;
    out.tdValue[e] = td.value ?? NaN;
    g.welch.mean(x, 0, out.length, psd);
    out.spectra.set(psd.subarray(0, nStored), e * nStored);
    // a rule the channel cannot reach gets a constant: its modified z is 0, so it never rejects
    if (g.broadBand) g.broadBand.compute(psd, one);
    out.logBroadband[e] = g.broadBand ? Math.log10(one[0]) : 0;
    if (g.muscleBand) g.muscleBand.compute(psd, one);
    out.logMuscle[e] = g.muscleBand ? Math.log10(one[0]) : 0;
    g.bandTable.compute(psd.subarray(0, nStored), out.bandPower.subarray(e * nBands, (e + 1) * nBands));
    if (out.fullSum && td.reason === null) {
      const full = out.fullSum;
      for (let b = 0; b < full.length; b++) full[b] += psd[b];
      out.fullCount++;
    }
  }
}

/** Per reference plan and output channel, the buffers of nGrid epochs the pass fills; gridOf(fs) gives each channel's grid. */
export function planStates(
  plans: readonly ReferencePlan[],
  selected: readonly Selected[],
  recordedNames: readonly string[],
  gridOf: (fsHz: number) => FrequencyGrid,
  nGrid: number,
  epochS: number,
): PlanState[] {
  return plans.map((plan) => {
    const outputs = plan.outputs.map((o): OutputState => {
      const fs = selected[o.source].signal.fsHz;
      const grid = gridOf(fs);
      return {
        channel: plan.reference === 'recorded' ? recordedNames[o.source] : o.channel,
        grid,
        length: Math.round(fs * epochS),
        spectra: new Float32Array(nGrid * grid.nStored),
        hasData: new Uint8Array(nGrid),
        tdReason: new Array(nGrid).fill(null),
        tdValue: new Float64Array(nGrid),
        logBroadband: new Float64Array(nGrid).fill(NaN),
        logMuscle: new Float64Array(nGrid).fill(NaN),
        bandPower: new Float32Array(nGrid * grid.bandIdx.length),
        fullSum: plan.reference === 'recorded' ? new Float64Array(grid.welch.nBins) : null,
        fullCount: 0,
        clean: null,
      };
    });
    return { plan, rereferencer: new Rereferencer(plan, plan.fsHz ? Math.round(plan.fsHz * epochS) : 0), outputs };
  });
}

/** What the epoch pass saw besides the per-output buffers. */
export interface EpochPassResult {
  /** Per epoch: why it was dropped for every channel ('gap', 'recording-end'), else null. */
  dropReason: (string | null)[];
  /** Per selected channel: samples at the digital limits. */
  clipped: Float64Array;
  /** Epochs read with data. */
  epochsSeen: number;
  /** Per selected channel, per epoch: SD in µV (NaN where not read). */
  epochSd: Float64Array[];
}

/** Reads every epoch of the grid once and fills the plan states; onEpoch(done) every 16 epochs. */
export async function epochPass(
  edf: EdfFile,
  selected: readonly Selected[],
  states: readonly PlanState[],
  nGrid: number,
  epochS: number,
  onEpoch: ((done: number) => void) | null,
): Promise<EpochPassResult> {
  const dropReason: (string | null)[] = new Array(nGrid).fill(null);
  const clipped = new Float64Array(selected.length);
  let epochsSeen = 0;
  const epochSd: Float64Array[] = []; // filled by push, not .map(): see readEpochs' epoch buffers
  for (let c = 0; c < selected.length; c++) epochSd.push(new Float64Array(nGrid).fill(NaN));
  const epochWork: EpochWork = {
    epochSd,
    psd: new Float64Array(Math.max(...states.flatMap((st) => st.outputs.map((o) => o.grid.welch.nBins)))),
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
      if (onEpoch && (done & 15) === 0) onEpoch(e + 1);
    }
  } catch (e) {
    if (e instanceof PipelineError) throw e;
    throw new PipelineError('read', edf.file, (e as { field?: string }).field ?? null, e instanceof Error ? e.message : String(e), { cause: e });
  }
  return { dropReason, clipped, epochsSeen, epochSd };
}
