/**
 * The scenario of a simulated cohort: everything the generator needs, as a plain JSON-able
 * object (validated by the Node glue in src/simulation/; the core takes the parsed object).
 *
 * Physical picture (documented in the ground truth too):
 *   V_e(t) = Σ_s g_s(e)·S_s(t) + N_e(t) + Σ_r g_r(e)·R_r(t)      potential at electrode e (µV)
 *   recorded_e(t) = V_e(t) − V_ref(t) + artifacts_e(t)            what the EDF stores
 * S_s are independent aperiodic background sources, N_e independent per-electrode background,
 * R_r the rhythms (slow oscillations, spindles, alpha, theta); g(e) = exp(−d²/(2σ²)) is a
 * volume-conduction gain falling with the angular distance d on the unit sphere between the
 * source's site and the electrode. The reference electrode is one more electrode (own
 * background, own gains), so re-referencing later changes the spectra as it does in real data.
 */
import type { Stage } from '../stages.ts';

export type ScoredStage = Exclude<Stage, 'unscored'>;

/** Aperiodic shape of one stage: L(f) = offset − log10(knee + f^exponent), log10 µV²/Hz. */
export interface StageAperiodic {
  offset: number;
  exponent: number;
  /** Knee k ≥ 0 (units Hz^exponent); 0 = plain power law. */
  knee: number;
}

/** A site on the head: a 10-10 electrode name whose idealised position is used. */
export type Site = string;

export interface BackgroundSource {
  site: Site;
  /** Gaussian spatial spread σ of the gain, degrees of arc on the sphere. */
  widthDeg: number;
  /** Relative power of this source (the weights are normalised, see BackgroundSpec). */
  weight: number;
}

export interface BackgroundSpec {
  sources: BackgroundSource[];
  /** Power of each electrode's independent background relative to a source of weight 1. */
  electrodeWeight: number;
}

/** A stationary narrow-band rhythm (Gaussian-noise process with a Gaussian-shaped density). */
export interface NarrowbandRhythm {
  name: string;
  kind: 'narrowband';
  site: Site;
  widthDeg: number;
  centerHz: number;
  /** Standard deviation of the Gaussian density in frequency, Hz. */
  bandwidthHz: number;
  /** RMS amplitude at unit gain per stage, µV; stages not listed have none. */
  rmsUv: Partial<Record<ScoredStage, number>>;
}

/** Bursts A·sin²(πt/D)·cos(2πft+φ) (waxing-waning), e.g. sleep spindles. */
export interface BurstRhythm {
  name: string;
  kind: 'bursts';
  site: Site;
  widthDeg: number;
  centerHz: number;
  /** Envelope peak amplitude at unit gain, µV. */
  amplitudeUv: number;
  /** Burst duration D drawn uniformly from [min, max], s. */
  durationS: [number, number];
  /** Standard deviation of each burst's frequency around the subject's centre, Hz. */
  burstFrequencySdHz: number;
  /** Mean bursts per minute per stage; stages not listed have none. */
  perMinute: Partial<Record<ScoredStage, number>>;
}

export type RhythmSpec = NarrowbandRhythm | BurstRhythm;

/** Between-subject variability (each subject draws once; the same draw holds in every stage). */
export interface VariabilitySpec {
  /** SD of the subject's offset deviation, log10 units. */
  offsetSd: number;
  /** SD of the subject's exponent deviation. */
  exponentSd: number;
  /** SD of log10 of each rhythm's amplitude factor. */
  rhythmAmplitudeSdLog10: number;
  /** SD of each rhythm's centre frequency as a fraction of it (0.025: 13.5 ± 0.34 Hz). */
  rhythmFrequencySdFraction: number;
}

/**
 * A planted group effect.
 * - offset: all physiological power (aperiodic and rhythms) × 10^deltaLog10 in the given stages,
 *   so every channel's aperiodic offset rises by deltaLog10 and peak heights above the
 *   aperiodic part stay as they are (a broadband shift, nothing band-specific).
 * - exponent: the aperiodic exponent + delta in the given stages (a tilt about 1 Hz).
 * - rhythm-amplitude: one rhythm's amplitude × factor (its power × factor²).
 * - rhythm-frequency: one rhythm's centre frequency moved by shiftHz in every stage (each
 *   subject's own centre, after its between-subject spread; amplitude and bandwidth unchanged).
 */
export type EffectSpec =
  | { kind: 'offset'; group: string; deltaLog10: number; stages?: ScoredStage[] }
  | { kind: 'exponent'; group: string; delta: number; stages?: ScoredStage[] }
  | { kind: 'rhythm-amplitude'; group: string; rhythm: string; factor: number }
  | { kind: 'rhythm-frequency'; group: string; rhythm: string; shiftHz: number };

/** Artifacts planted in single subjects; each is written to the ground truth. */
export type ArtifactSpec =
  | { kind: 'mains'; subject: string; frequencyHz: 50 | 60; amplitudeUv: number; channels: string[] | 'all' }
  | { kind: 'flat'; subject: string; channel: string; valueUv: number; noiseSdUv: number }
  | { kind: 'movement'; subject: string; epochFraction: number; rmsUv: number; durationS: [number, number] };

export interface CovariateSpec {
  ageMean: number;
  ageSd: number;
  /** Probability of sex 'F'. */
  femaleFraction: number;
  /** The made-up questionnaire score (integer, clamped to [scoreMin, scoreMax]). */
  scoreMean: number;
  scoreSd: number;
}

export interface GroupSpec {
  name: string;
  /** Subject codes are `${codePrefix}-01`, `${codePrefix}-02`, … */
  codePrefix: string;
  size: number;
  /** Sampling rate of this group's recordings, Hz (whole number; per-subject overrides below). */
  fsHz: number;
  covariates: CovariateSpec;
}

export interface HypnogramSpec {
  /** Mean wake before sleep onset, min. */
  wakeAtStartMin: number;
  /** Mean minutes of each part of the first cycle N1 → N2 → N3 → N2 → R. */
  cycleMin: { N1: number; N2: number; N3: number; N2late: number; R: number };
  /** N3 length multiplied by this for each later cycle (N3 wanes over the night). */
  n3PerCycle: number;
  /** R length multiplied by this for each later cycle (REM lengthens over the night). */
  rPerCycle: number;
  /** Relative SD of every duration (lognormal-like jitter). */
  jitter: number;
  /** Mean number of awakenings per hour of sleep (each 1–2 epochs of W). */
  awakeningsPerHour: number;
}

export interface ReferenceSpec {
  /** Label of the reference in the EDF signal labels ("EEG C3-REF"). */
  label: string;
  /** Site of the reference electrode (a 10-10 name, e.g. FCz or Fpz). */
  site: Site;
}

export interface Scenario {
  name: string;
  /** Plain-words description of the study story and everything planted. */
  description: string;
  seed: number;
  /** Scoring epoch, s (30 by AASM convention). */
  epochS: number;
  nightMin: number;
  /** Optional fixed stage sequence for every subject (one per epoch), instead of generated cycles. */
  stages?: ScoredStage[];
  hypnogram: HypnogramSpec;
  /** Recorded electrodes (10-10 names), mastoids M1/M2 included as ordinary channels. */
  channels: string[];
  reference: ReferenceSpec;
  /** Background below this frequency rolls off as (f/highPassHz)², like a recording high-pass, Hz. */
  highPassHz: number;
  /** Per stage aperiodic shape of a unit-weight channel (see groundTruth for per-channel values). */
  aperiodic: Record<ScoredStage, StageAperiodic>;
  background: BackgroundSpec;
  rhythms: RhythmSpec[];
  variability: VariabilitySpec;
  groups: GroupSpec[];
  /** Per-subject overrides. */
  subjects?: Record<string, { fsHz?: number }>;
  effects: EffectSpec[];
  artifacts: ArtifactSpec[];
  /** Start date-time of every recording, 'YYYY-MM-DDTHH:MM:SS'. */
  startDate: string;
  scoreRange: [number, number];
}

export class ScenarioError extends Error {
  constructor(
    readonly field: string,
    readonly value: unknown,
    message: string,
  ) {
    super(`scenario field '${field}' (value ${JSON.stringify(value)}): ${message}`);
    this.name = 'ScenarioError';
  }
}
