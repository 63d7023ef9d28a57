/**
 * Everything fixed for one subject's night before any sample is drawn: the stage sequence, the
 * subject's own aperiodic and rhythm parameters (group effects and between-subject variability
 * applied), the conduction gains of every source into every recorded channel (reference
 * subtracted), and the artifacts. Pure and cheap; the samples come from NightGenerator.
 */
import { SCORED_STAGES } from '../stages.ts';
import { generateStages } from './hypnogram.ts';
import { ScenarioError, type ReferenceSpec, type RhythmSpec, type Scenario, type ScoredStage, type StageAperiodic } from './scenario.ts';
import { STREAM, streamRandom } from './seeds.ts';
import { conductionGain, sitePosition } from './spatial.ts';
import { listSubjects, type SimulatedSubject } from './subjects.ts';
import { subjectTruth, type SubjectTruth } from './truth.ts';
import { checkScenario } from './validate.ts';

export interface PlannedSource {
  site: string;
  /** Power weight after normalisation (mean recorded-channel weight = 1). */
  weight: number;
  /** Gain into each recorded channel: g(channel) − g(reference). */
  gains: Float64Array;
}

export interface PlannedRhythm {
  name: string;
  kind: RhythmSpec['kind'];
  site: string;
  /** The subject's centre frequency, Hz. */
  centerHz: number;
  /** narrowband: density SD in Hz; bursts: per-burst frequency SD in Hz. */
  bandwidthHz: number;
  /** narrowband: RMS µV at unit gain; bursts: envelope peak µV. Per stage; 0 = absent. */
  amplitudeUv: Record<ScoredStage, number>;
  /** bursts only: bursts per minute per stage. */
  perMinute: Record<ScoredStage, number>;
  durationS: [number, number];
  gains: Float64Array;
}

export interface PlannedArtifacts {
  mains: { frequencyHz: number; amplitudeUv: number; channels: number[]; phases: number[] }[];
  flat: { channel: number; valueUv: number; noiseSdUv: number }[];
  movement: { epochFraction: number; rmsUv: number; durationS: [number, number]; epochs: number[] } | null;
}

export interface NightPlan {
  scenarioSeed: number;
  subject: SimulatedSubject;
  fsHz: number;
  epochS: number;
  epochSamples: number;
  nEpochs: number;
  stages: ScoredStage[];
  channels: string[];
  reference: ReferenceSpec;
  highPassHz: number;
  /** The subject's aperiodic shape per stage for a channel of unit weight. */
  aperiodic: Record<ScoredStage, StageAperiodic>;
  sources: PlannedSource[];
  /** Power weight of each electrode's own background (normalised like the sources). */
  electrodeWeight: number;
  rhythms: PlannedRhythm[];
  artifacts: PlannedArtifacts;
  truth: SubjectTruth;
}

function stageRecord(value: (s: ScoredStage) => number): Record<ScoredStage, number> {
  return Object.fromEntries(SCORED_STAGES.map((s) => [s, value(s)])) as Record<ScoredStage, number>;
}

/** Is the epoch a movement epoch? One uniform draw from its own stream (order-free). */
export function isMovementEpoch(seed: number, subjectIndex: number, epoch: number, fraction: number): boolean {
  return streamRandom(seed, STREAM.movement, subjectIndex, epoch).uniform() < fraction;
}

export function planNight(scenario: Scenario, subjectIndex: number): NightPlan {
  checkScenario(scenario);
  const subjects = listSubjects(scenario);
  const subject = subjects[subjectIndex];
  if (!subject) throw new ScenarioError('subjectIndex', subjectIndex, `must be in 0 … ${subjects.length - 1}`);
  const seed = scenario.seed;
  const nEpochs = (scenario.nightMin * 60) / scenario.epochS;
  const stages = scenario.stages
    ? [...scenario.stages]
    : generateStages(scenario.hypnogram, nEpochs, scenario.epochS, streamRandom(seed, STREAM.hypnogram, subjectIndex));

  const rng = streamRandom(seed, STREAM.subject, subjectIndex);
  const v = scenario.variability;
  const effects = scenario.effects.filter((e) => e.group === subject.group);
  const offsetDev = v.offsetSd * rng.normal();
  const exponentDev = v.exponentSd * rng.normal();
  const offsetEffect = stageRecord((st) =>
    effects.reduce((sum, e) => sum + (e.kind === 'offset' && (!e.stages || e.stages.includes(st)) ? e.deltaLog10 : 0), 0),
  );
  const exponentEffect = stageRecord((st) =>
    effects.reduce((sum, e) => sum + (e.kind === 'exponent' && (!e.stages || e.stages.includes(st)) ? e.delta : 0), 0),
  );
  const aperiodic = Object.fromEntries(
    SCORED_STAGES.map((st) => {
      const a = scenario.aperiodic[st];
      return [st, { offset: a.offset + offsetDev + offsetEffect[st], exponent: a.exponent + exponentDev + exponentEffect[st], knee: a.knee }];
    }),
  ) as Record<ScoredStage, StageAperiodic>;

  // electrodes: the recorded channels, then the reference
  const channelPos = scenario.channels.map((c, i) => sitePosition(c, `channels[${i}]`));
  const refPos = sitePosition(scenario.reference.site, 'reference.site');
  const differentialGains = (site: string, widthDeg: number, field: string): Float64Array => {
    const p = sitePosition(site, field);
    const gRef = conductionGain(p, refPos, widthDeg);
    return Float64Array.from(channelPos.map((e) => conductionGain(p, e, widthDeg) - gRef));
  };

  // background sources, normalised so the mean over recorded channels of
  // w_c = Σ_s a_s·(g_s(c) − g_s(ref))² + 2q  (own and reference background) equals 1
  const raw = scenario.background.sources.map((s, i) => ({
    site: s.site,
    weight: s.weight,
    gains: differentialGains(s.site, s.widthDeg, `background.sources[${i}].site`),
  }));
  let meanW = 0;
  for (let c = 0; c < channelPos.length; c++) {
    let w = 2 * scenario.background.electrodeWeight;
    for (const s of raw) w += s.weight * s.gains[c] * s.gains[c];
    meanW += w / channelPos.length;
  }
  const sources: PlannedSource[] = raw.map((s) => ({ ...s, weight: s.weight / meanW }));
  const electrodeWeight = scenario.background.electrodeWeight / meanW;

  // rhythms: subject's centre (moved by a frequency effect) and amplitude factor; the offset effect scales rhythm power too
  const rhythms: PlannedRhythm[] = scenario.rhythms.map((r, i) => {
    let centerHz = r.centerHz * (1 + v.rhythmFrequencySdFraction * rng.normal());
    for (const e of effects) if (e.kind === 'rhythm-frequency' && e.rhythm === r.name) centerHz += e.shiftHz;
    let factor = Math.pow(10, v.rhythmAmplitudeSdLog10 * rng.normal());
    for (const e of effects) if (e.kind === 'rhythm-amplitude' && e.rhythm === r.name) factor *= e.factor;
    const base = (st: ScoredStage): number => (r.kind === 'bursts' ? ((r.perMinute[st] ?? 0) > 0 ? r.amplitudeUv : 0) : (r.rmsUv[st] ?? 0));
    return {
      name: r.name,
      kind: r.kind,
      site: r.site,
      centerHz,
      bandwidthHz: r.kind === 'bursts' ? r.burstFrequencySdHz : r.bandwidthHz,
      amplitudeUv: stageRecord((st) => base(st) * factor * Math.pow(10, offsetEffect[st] / 2)),
      perMinute: stageRecord((st) => (r.kind === 'bursts' ? (r.perMinute[st] ?? 0) : 0)),
      durationS: r.kind === 'bursts' ? r.durationS : [0, 0],
      gains: differentialGains(r.site, r.widthDeg, `rhythms[${i}].site`),
    };
  });

  const channelIndex = (name: string): number => scenario.channels.findIndex((c) => c.toUpperCase() === name.toUpperCase());
  const mine = scenario.artifacts.filter((a) => a.subject === subject.code);
  const artRng = streamRandom(seed, STREAM.artifacts, subjectIndex);
  const artifacts: PlannedArtifacts = { mains: [], flat: [], movement: null };
  for (const a of mine) {
    if (a.kind === 'mains') {
      const channels = a.channels === 'all' ? scenario.channels.map((_, i) => i) : a.channels.map(channelIndex);
      artifacts.mains.push({ frequencyHz: a.frequencyHz, amplitudeUv: a.amplitudeUv, channels, phases: channels.map(() => 2 * Math.PI * artRng.uniform()) });
    } else if (a.kind === 'flat') {
      artifacts.flat.push({ channel: channelIndex(a.channel), valueUv: a.valueUv, noiseSdUv: a.noiseSdUv });
    } else {
      const epochs: number[] = [];
      for (let e = 0; e < nEpochs; e++) if (isMovementEpoch(seed, subjectIndex, e, a.epochFraction)) epochs.push(e);
      artifacts.movement = { epochFraction: a.epochFraction, rmsUv: a.rmsUv, durationS: a.durationS, epochs };
    }
  }

  const plan: Omit<NightPlan, 'truth'> = {
    scenarioSeed: seed,
    subject,
    fsHz: subject.fsHz,
    epochS: scenario.epochS,
    epochSamples: scenario.epochS * subject.fsHz,
    nEpochs,
    stages,
    channels: [...scenario.channels],
    reference: { ...scenario.reference },
    highPassHz: scenario.highPassHz,
    aperiodic,
    sources,
    electrodeWeight,
    rhythms,
    artifacts,
  };
  return { ...plan, truth: subjectTruth(plan) };
}
