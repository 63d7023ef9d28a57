/**
 * The ground truth of a simulated night: what each recorded channel's spectrum is made of.
 *
 * Every aperiodic component (each background source and each electrode's own background) has
 * the same shape 10^L(f), L(f) = b − log10(k + f^χ) (aperiodic-model.ts), so any linear
 * derivation Σ_c α_c·recorded_c has the aperiodic density W·10^L(f) with
 *   W = Σ_s a_s·(Σ_c α_c·Δg_s(c))² + q·(Σ_c α_c² + (Σ_c α_c)²)
 * (a_s source weights, Δg_s(c) = g_s(c) − g_s(ref), q the electrode weight; the reference's own
 * background enters with coefficient −Σα). Its offset is therefore b + log10 W with the same
 * exponent and knee. Rhythms add G_r²·D_r(f) with G_r = Σ_c α_c·Δg_r(c): narrow-band ones a
 * Gaussian density D_r(f) = P·exp(−(f − c)²/(2w²)), P = rms²/(w·√(2π)); burst trains the
 * density of burst.ts. Below the stated high-pass frequency the background rolls off as f².
 * Artifacts are listed, not modelled in the density.
 */
import { aperiodicLog10 } from '../spectrum/aperiodic-model.ts';
import { SCORED_STAGES } from '../stages.ts';
import { expectedBurstDensity } from './burst.ts';
import type { NightPlan, PlannedRhythm } from './plan.ts';
import type { ScoredStage, StageAperiodic } from './scenario.ts';

type PlanCore = Omit<NightPlan, 'truth'>;

/** Background density of unit weight at fHz, µV²/Hz: 10^L(f), × (f/f_hp)² below f_hp (µV²/Hz). */
export function backgroundDensity(a: StageAperiodic, highPassHz: number, fHz: number): number {
  if (fHz >= highPassHz) return Math.pow(10, aperiodicLog10(fHz, a));
  const r = fHz / highPassHz;
  return Math.pow(10, aperiodicLog10(highPassHz, a)) * r * r;
}

/** Linear density of a rhythm at unit gain in a stage, µV²/Hz. */
export function rhythmDensity(r: PlannedRhythm, stage: ScoredStage, fHz: number): number {
  const amp = r.amplitudeUv[stage];
  if (amp === 0) return 0;
  if (r.kind === 'narrowband') {
    const w = r.bandwidthHz;
    const d = fHz - r.centerHz;
    // P·exp(−(f − c)²/(2w²)) with P = rms²/(w·√(2π)), so ∫ D df = rms²
    return ((amp * amp) / (w * Math.sqrt(2 * Math.PI))) * Math.exp((-d * d) / (2 * w * w));
  }
  return expectedBurstDensity(fHz, {
    centerHz: r.centerHz,
    amplitudeUv: amp,
    durationS: r.durationS,
    burstFrequencySdHz: r.bandwidthHz,
    perMinute: r.perMinute[stage],
  });
}

/** Weight W of the aperiodic background in the derivation Σ_c α_c·recorded_c (see above). */
export function backgroundWeight(plan: PlanCore, alpha: ArrayLike<number>): number {
  let sumA = 0;
  let sumA2 = 0;
  for (let c = 0; c < plan.channels.length; c++) {
    sumA += alpha[c];
    sumA2 += alpha[c] * alpha[c];
  }
  let w = plan.electrodeWeight * (sumA2 + sumA * sumA);
  for (const s of plan.sources) {
    const g = derivationGain(s.gains, alpha);
    w += s.weight * g * g;
  }
  return w;
}

function derivationGain(gains: Float64Array, alpha: ArrayLike<number>): number {
  let g = 0;
  for (let c = 0; c < gains.length; c++) g += alpha[c] * gains[c];
  return g;
}

/**
 * Expected one-sided density (µV²/Hz) of the derivation Σ_c α_c·recorded_c in a stage, at each
 * frequency: background, narrow-band rhythms and burst trains; artifacts excluded.
 */
export function expectedDensity(plan: PlanCore, stage: ScoredStage, alpha: ArrayLike<number>, freqsHz: ArrayLike<number>): Float64Array {
  const w = backgroundWeight(plan, alpha);
  const gains = plan.rhythms.map((r) => derivationGain(r.gains, alpha));
  const out = new Float64Array(freqsHz.length);
  for (let i = 0; i < freqsHz.length; i++) {
    const f = freqsHz[i];
    let p = w * backgroundDensity(plan.aperiodic[stage], plan.highPassHz, f);
    plan.rhythms.forEach((r, j) => {
      if (gains[j] !== 0) p += gains[j] * gains[j] * rhythmDensity(r, stage, f);
    });
    out[i] = p;
  }
  return out;
}

/** Coefficients selecting one recorded channel (α = unit vector). */
export function channelCoefficients(plan: PlanCore, channel: string): Float64Array {
  const i = plan.channels.findIndex((c) => c.toUpperCase() === channel.toUpperCase());
  if (i < 0) throw new Error(`no channel '${channel}' in the simulated recording`);
  const a = new Float64Array(plan.channels.length);
  a[i] = 1;
  return a;
}

export interface PeakTruth {
  rhythm: string;
  centerHz: number;
  /** narrowband: Gaussian SD of the density; bursts: SD of a Gaussian with the same half-maximum width. */
  widthHz: number;
  /** Rhythm density at the centre in this channel, µV²/Hz. */
  densityUv2PerHz: number;
  /** log10(1 + rhythm density / aperiodic density) at the centre: height above the aperiodic part. */
  heightLog10: number;
}

export interface SubjectTruth {
  subject: string;
  group: string;
  fsHz: number;
  epochS: number;
  nEpochs: number;
  reference: { label: string; site: string };
  stages: ScoredStage[];
  covariates: { age: number; sex: 'F' | 'M'; score: number };
  /** Per stage and recorded channel (as recorded, against the reference). */
  aperiodic: Record<ScoredStage, Record<string, StageAperiodic>>;
  /** Peaks above the aperiodic part per stage and channel (heights below 0.005 left out). */
  peaks: Record<ScoredStage, Record<string, PeakTruth[]>>;
  /** The subject's rhythms; amplitudeUvByStage is the RMS (narrowband) or the envelope peak (bursts) at unit gain. */
  rhythms: {
    name: string;
    kind: string;
    site: string;
    centerHz: number;
    amplitudeUvByStage: Record<ScoredStage, number>;
    perMinuteByStage?: Record<ScoredStage, number>;
  }[];
  artifacts: (
    | { kind: 'mains'; frequencyHz: number; amplitudeUv: number; channels: string[] }
    | { kind: 'flat'; channel: string; valueUv: number; noiseSdUv: number }
    | { kind: 'movement'; rmsUv: number; epochs: number[] }
  )[];
}

/** Half-maximum width of the rhythm density (numerically, 0.005-Hz steps), as a Gaussian SD. */
function equivalentGaussianSd(r: PlannedRhythm, stage: ScoredStage): number {
  if (r.kind === 'narrowband') return r.bandwidthHz;
  const peak = rhythmDensity(r, stage, r.centerHz);
  let d = 0;
  while (d < 10 && rhythmDensity(r, stage, r.centerHz + d) > peak / 2) d += 0.005;
  return d / Math.sqrt(2 * Math.log(2)); // half-width at half-maximum = σ·√(2 ln 2)
}

const round = (x: number, digits = 6): number => Number(x.toFixed(digits));

export function subjectTruth(plan: PlanCore): SubjectTruth {
  const aperiodic = {} as SubjectTruth['aperiodic'];
  const peaks = {} as SubjectTruth['peaks'];
  for (const st of SCORED_STAGES) {
    aperiodic[st] = {};
    peaks[st] = {};
    const a = plan.aperiodic[st];
    plan.channels.forEach((ch, c) => {
      const alpha = channelCoefficients(plan, ch);
      const w = backgroundWeight(plan, alpha);
      const chAp = { offset: round(a.offset + Math.log10(w)), exponent: round(a.exponent), knee: round(a.knee) };
      aperiodic[st][ch] = chAp;
      const list: PeakTruth[] = [];
      plan.rhythms.forEach((r, j) => {
        if (r.amplitudeUv[st] === 0) return;
        const g = r.gains[c];
        const density = g * g * rhythmDensity(r, st, r.centerHz);
        const height = Math.log10(1 + density / (w * backgroundDensity(a, plan.highPassHz, r.centerHz)));
        if (height < 0.005) return;
        list.push({
          rhythm: plan.rhythms[j].name,
          centerHz: round(r.centerHz, 4),
          widthHz: round(equivalentGaussianSd(r, st), 4),
          densityUv2PerHz: round(density),
          heightLog10: round(height, 4),
        });
      });
      peaks[st][ch] = list;
    });
  }
  const name = (i: number): string => plan.channels[i];
  return {
    subject: plan.subject.code,
    group: plan.subject.group,
    fsHz: plan.fsHz,
    epochS: plan.epochS,
    nEpochs: plan.nEpochs,
    reference: { label: plan.reference.label, site: plan.reference.site },
    stages: plan.stages,
    covariates: { age: plan.subject.age, sex: plan.subject.sex, score: plan.subject.score },
    aperiodic,
    peaks,
    rhythms: plan.rhythms.map((r) => ({
      name: r.name,
      kind: r.kind,
      site: r.site,
      centerHz: round(r.centerHz, 4),
      amplitudeUvByStage: Object.fromEntries(SCORED_STAGES.map((s) => [s, round(r.amplitudeUv[s], 4)])) as Record<ScoredStage, number>,
      ...(r.kind === 'bursts' ? { perMinuteByStage: r.perMinute } : {}),
    })),
    artifacts: [
      ...plan.artifacts.mains.map((m) => ({ kind: 'mains' as const, frequencyHz: m.frequencyHz, amplitudeUv: m.amplitudeUv, channels: m.channels.map(name) })),
      ...plan.artifacts.flat.map((f) => ({ kind: 'flat' as const, channel: name(f.channel), valueUv: f.valueUv, noiseSdUv: f.noiseSdUv })),
      ...(plan.artifacts.movement ? [{ kind: 'movement' as const, rmsUv: plan.artifacts.movement.rmsUv, epochs: plan.artifacts.movement.epochs }] : []),
    ],
  };
}
