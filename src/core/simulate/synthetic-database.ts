/**
 * A synthetic spectral cohort drawn straight from the spectral model (no EDF, no Welch): for
 * recording × channel × stage, aperiodic parameters and peaks with known group effects, and a
 * spectrum with the noise of a Welch average (simulateSpectrum). Used to build databases of
 * benchmark size (10,000 recordings × 64 channels × 5 stages) quickly.
 *
 * Each recording is drawn from its own random stream (seed, recording index), so a recording
 * is the same whether the cohort is drawn whole, in batches or in any order.
 *
 * The model (all values invented for the benchmark, plausible for sleep EEG but from no dataset):
 *   offset   = b_stage + 0.08·y_channel + u_rec + e_rec,ch + Δb·[group 2]        (log10 µV²/Hz)
 *   exponent = χ_stage + v_rec + f_rec,ch − 0.004·(age − 45) + Δχ·[group 2]
 *   peaks    = the stage's peaks; the N2 sigma peak height + Δh·[group 2]
 * with u ~ N(0, 0.15²), v ~ N(0, 0.10²), e, f ~ N(0, 0.04²), y the electrode's front–back
 * coordinate on the unit sphere (src/core/montage/positions.ts), age uniform in 20–70 years,
 * knee 0 (plain power law). Groups alternate by recording index.
 */
import { electrodePosition } from '../montage/positions.ts';
import type { PeakParams } from '../spectrum/aperiodic-model.ts';
import type { Stage } from '../stages.ts';

type ScoredStage = Exclude<Stage, 'unscored'>;
import type { Random } from '../stats/random.ts';
import { streamRandom } from './seeds.ts';
import { simulateSpectrum } from './spectrum.ts';

/** 64 electrode names of the 10-10 system (ACNS guideline 2016), front to back. */
export const TEN_TEN_64: readonly string[] = [
  'Fp1',
  'Fpz',
  'Fp2',
  'AF7',
  'AF3',
  'AFz',
  'AF4',
  'AF8',
  'F7',
  'F5',
  'F3',
  'F1',
  'Fz',
  'F2',
  'F4',
  'F6',
  'F8',
  'FT7',
  'FC5',
  'FC3',
  'FC1',
  'FCz',
  'FC2',
  'FC4',
  'FC6',
  'FT8',
  'T7',
  'C5',
  'C3',
  'C1',
  'Cz',
  'C2',
  'C4',
  'C6',
  'T8',
  'TP7',
  'CP5',
  'CP3',
  'CP1',
  'CPz',
  'CP2',
  'CP4',
  'CP6',
  'TP8',
  'P7',
  'P5',
  'P3',
  'P1',
  'Pz',
  'P2',
  'P4',
  'P6',
  'P8',
  'PO7',
  'PO3',
  'POz',
  'PO4',
  'PO8',
  'O1',
  'Oz',
  'O2',
  'TP9',
  'TP10',
  'Iz',
];

export interface StageModel {
  /** Offset b in log10 µV²/Hz. */
  offset: number;
  exponent: number;
  peaks: readonly PeakParams[];
  /** Typical clean 30-s epochs of the stage in one night (jittered ±25 % per recording). */
  epochs: number;
}

/** Invented stage baselines (see the module comment). */
export const STAGE_MODELS: Readonly<Record<ScoredStage, StageModel>> = {
  W: { offset: 1.2, exponent: 1.3, peaks: [{ centerHz: 10, height: 0.35, widthHz: 1.2 }], epochs: 60 },
  N1: { offset: 1.3, exponent: 1.6, peaks: [{ centerHz: 6, height: 0.15, widthHz: 1.5 }], epochs: 40 },
  N2: { offset: 1.5, exponent: 2.0, peaks: [{ centerHz: 13, height: 0.35, widthHz: 1.0 }], epochs: 400 },
  N3: { offset: 1.9, exponent: 2.5, peaks: [{ centerHz: 12, height: 0.15, widthHz: 1.0 }], epochs: 150 },
  R: { offset: 1.2, exponent: 1.7, peaks: [{ centerHz: 7, height: 0.1, widthHz: 1.5 }], epochs: 200 },
};

export interface SyntheticCohortSpec {
  recordings: number;
  /** Electrode names (default: the first `channelCount` of TEN_TEN_64). */
  channels: readonly string[];
  stages: readonly ScoredStage[];
  /** Frequency axis freqStartHz + k·freqStepHz, k < nBins (Hz). */
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  /** Two group labels; recording i belongs to groups[i mod 2]. */
  groups: readonly [string, string];
  /** Effects of groups[1] over groups[0]: offset (log10), exponent, N2 sigma peak height (log10). */
  effect: { offsetLog10: number; exponent: number; sigmaHeightLog10: number };
  /** Welch segments per 30-s epoch (4-s segments, 50 % overlap: 14). */
  segmentsPerEpoch: number;
  seed: number;
}

export const DEFAULT_SYNTHETIC_SPEC: Readonly<SyntheticCohortSpec> = {
  recordings: 100,
  channels: TEN_TEN_64,
  stages: ['W', 'N1', 'N2', 'N3', 'R'],
  freqStartHz: 0,
  freqStepHz: 0.25,
  nBins: 181,
  groups: ['control', 'patient'],
  effect: { offsetLog10: 0.05, exponent: 0.1, sigmaHeightLog10: -0.1 },
  segmentsPerEpoch: 14,
  seed: 1,
};

/** A spec from the defaults and the given fields; channelCount picks the first names of TEN_TEN_64. */
export function syntheticSpec(partial: Partial<SyntheticCohortSpec> & { channelCount?: number } = {}): SyntheticCohortSpec {
  const { channelCount, ...rest } = partial;
  const spec: SyntheticCohortSpec = { ...DEFAULT_SYNTHETIC_SPEC, ...rest };
  if (channelCount !== undefined) {
    if (!Number.isInteger(channelCount) || channelCount < 1 || channelCount > TEN_TEN_64.length) {
      throw new RangeError(`channelCount must be 1–${TEN_TEN_64.length}, got ${channelCount}`);
    }
    spec.channels = TEN_TEN_64.slice(0, channelCount);
  }
  if (!Number.isInteger(spec.recordings) || spec.recordings < 1) throw new RangeError(`recordings must be a whole number ≥ 1, got ${spec.recordings}`);
  if (!Number.isInteger(spec.nBins) || spec.nBins < 2) throw new RangeError(`nBins must be a whole number ≥ 2, got ${spec.nBins}`);
  if (!(spec.freqStepHz > 0) || !(spec.freqStartHz >= 0))
    throw new RangeError(`invalid frequency axis: start ${spec.freqStartHz} Hz, step ${spec.freqStepHz} Hz`);
  if (spec.channels.length === 0 || spec.stages.length === 0) throw new RangeError('at least one channel and one stage are needed');
  return spec;
}

export interface SyntheticRecording {
  index: number;
  subject: string;
  group: string;
  /** years */
  age: number;
  /** Clean epochs per stage (spec.stages order). */
  nEpochs: Int32Array;
  /** True aperiodic parameters, row-major [channel][stage]. */
  offset: Float64Array;
  exponent: Float64Array;
  /** PSD in µV²/Hz, row-major [channel][stage][bin]. A 0-Hz bin holds 0 (see drawRecording). */
  power: Float32Array;
}

export function subjectName(index: number): string {
  return `syn${String(index + 1).padStart(5, '0')}`;
}

/** Age in years, uniform in 20–70: the first draw of a recording's stream. */
function drawAge(rng: Random): number {
  return 20 + 50 * rng.uniform();
}

/** The participant of recording `index` (subject, group, age in years), without drawing its spectra. */
export function syntheticParticipant(spec: SyntheticCohortSpec, index: number): { subject: string; group: string; age: number } {
  return { subject: subjectName(index), group: spec.groups[index % 2], age: drawAge(streamRandom(spec.seed, 0x5d1, index)) };
}

/** Front–back electrode coordinate y on the unit sphere (0 when the name is not a 10-10 position). */
function frontBack(channel: string): number {
  return electrodePosition(channel)?.y ?? 0;
}

/**
 * Recording `index` of the cohort. Spectra at f > 0 come from simulateSpectrum with nAveraged =
 * 1.9 × segments (its doc: equivalent independent segments of 50 %-overlapping Hann windows);
 * the model is undefined at 0 Hz, and a per-segment mean-removed Welch spectrum is ≈ 0 there,
 * so a 0-Hz bin is stored as 0.
 */
export function drawRecording(spec: SyntheticCohortSpec, index: number): SyntheticRecording {
  const rng = streamRandom(spec.seed, 0x5d1, index);
  const nc = spec.channels.length;
  const ns = spec.stages.length;
  const nb = spec.nBins;
  const inGroup2 = index % 2 === 1 ? 1 : 0;
  const age = drawAge(rng);
  const u = 0.15 * rng.normal();
  const v = 0.1 * rng.normal();
  const nEpochs = Int32Array.from(spec.stages, (s) => Math.max(1, Math.round(STAGE_MODELS[s].epochs * (0.75 + 0.5 * rng.uniform()))));
  const first = spec.freqStartHz > 0 ? 0 : 1;
  const freqs = Float64Array.from({ length: nb - first }, (_, k) => spec.freqStartHz + (k + first) * spec.freqStepHz);
  const offset = new Float64Array(nc * ns);
  const exponent = new Float64Array(nc * ns);
  const power = new Float32Array(nc * ns * nb);
  for (let c = 0; c < nc; c++) {
    const y = frontBack(spec.channels[c]);
    const e = 0.04 * rng.normal();
    const f = 0.04 * rng.normal();
    for (let s = 0; s < ns; s++) {
      const model = STAGE_MODELS[spec.stages[s]];
      const at = c * ns + s;
      // offset = b_stage + 0.08·y + u + e + Δb·[group 2]
      offset[at] = model.offset + 0.08 * y + u + e + spec.effect.offsetLog10 * inGroup2;
      // exponent = χ_stage + v + f − 0.004·(age − 45) + Δχ·[group 2]
      exponent[at] = model.exponent + v + f - 0.004 * (age - 45) + spec.effect.exponent * inGroup2;
      const peaks = model.peaks.map((p) =>
        spec.stages[s] === 'N2' && p.centerHz === 13 ? { ...p, height: p.height + spec.effect.sigmaHeightLog10 * inGroup2 } : p,
      );
      const psd = simulateSpectrum(
        { aperiodic: { offset: offset[at], exponent: exponent[at], knee: 0 }, peaks },
        freqs,
        1.9 * spec.segmentsPerEpoch * nEpochs[s],
        rng,
      );
      const base = at * nb;
      for (let k = 0; k < psd.length; k++) power[base + first + k] = psd[k];
    }
  }
  return { index, subject: subjectName(index), group: spec.groups[inGroup2], age, nEpochs, offset, exponent, power };
}
