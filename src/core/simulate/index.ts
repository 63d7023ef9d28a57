/** Synthetic sleep EEG with known ground truth (pure; the Node glue is src/simulation/). */
export type {
  ArtifactSpec,
  BackgroundSource,
  BackgroundSpec,
  BurstRhythm,
  CovariateSpec,
  EffectSpec,
  GroupSpec,
  HypnogramSpec,
  NarrowbandRhythm,
  ReferenceSpec,
  RhythmSpec,
  Scenario,
  ScoredStage,
  StageAperiodic,
  VariabilitySpec,
} from './scenario.ts';
export { ScenarioError } from './scenario.ts';
export { checkScenario } from './validate.ts';
export { listSubjects, subjectCode, type SimulatedSubject } from './subjects.ts';
export { planNight, isMovementEpoch, type NightPlan, type PlannedRhythm, type PlannedSource } from './plan.ts';
export { NightGenerator, generateEpoch } from './generate.ts';
export { groundTruth, truthOf, type CohortTruth } from './ground-truth.ts';
export {
  backgroundDensity,
  backgroundWeight,
  channelCoefficients,
  expectedDensity,
  rhythmDensity,
  subjectTruth,
  type PeakTruth,
  type SubjectTruth,
} from './truth.ts';
export { simulateSpectrum, gammaDeviate, type SpectrumParams } from './spectrum.ts';
export { generateStages } from './hypnogram.ts';
export { expectedBurstDensity, hannEnvelopeMagnitude } from './burst.ts';
