/**
 * Study planning and individual deviations, from a cohort's own stored spectra (pure: no I/O).
 *
 * - power.ts: `bandwise power` — the power of a whole contrast by simulation: groups drawn with
 *   replacement from a reference group (resample.ts), an effect planted (planting.ts), the
 *   contrast run, a finding judged (overlap.ts), Clopper–Pearson intervals (binomial-interval.ts).
 * - deviation.ts: `bandwise deviation` — every subject scored against a reference group per
 *   channel × point (subject-matrix.ts, covariates.ts, deviation-spec.ts).
 */
export { clopperPearson, type ProportionInterval } from './binomial-interval.ts';
export { PLANTABLE_MEASURES, PlanningInputError, isPlantable, measureTakesBand, plantedRegion, plantingRule, type PlantedRegion } from './planting.ts';
export { drawStudy, type ReferenceRows, type SimulatedStudy } from './resample.ts';
export { judgeStudy, type Correction, type SimulationOutcome } from './overlap.ts';
export {
  POWER_INTERVAL_LEVEL,
  checkPowerPlan,
  jobCount,
  powerResult,
  preparePower,
  runSimulation,
  simulatePower,
  simulationJob,
  type PowerPlan,
  type PowerPoint,
  type PowerResult,
  type PreparedPower,
} from './power.ts';
export {
  DEVIATION_MEASURES,
  DeviationSpecError,
  deviationSpecSchema,
  measureContrast,
  parseDeviationSpec,
  type DeviationSpec,
  type DeviationSpecJson,
} from './deviation-spec.ts';
export { subjectMatrix, type SubjectMatrix } from './subject-matrix.ts';
export { covariateDesign, type CovariateDesign } from './covariates.ts';
export {
  DEVIANT_Z,
  deviation,
  deviationResult,
  fitDeviation,
  referenceBand,
  type DeviationModel,
  type DeviationResult,
  type ReferenceBand,
  type ShareSummary,
  type SubjectDeviation,
} from './deviation.ts';
export { quantiles } from './quantile.ts';
