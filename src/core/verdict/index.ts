/**
 * Band or broadband? The band check (band-check.ts, rules in rules.ts), its figure data
 * (figure.ts) and robustness across analysis paths (paths.ts). Pure: no I/O.
 */
export {
  bandCheck,
  bandCheckSets,
  bandFlanks,
  directionWords,
  BandCheckError,
  type BandCheckOptions,
  type BandCheckResult,
  type BandCheckTests,
  type FrequencyWise,
} from './band-check.ts';
export {
  decideVerdict,
  bonferroni,
  describeTest,
  formatHz,
  VERDICTS,
  type Verdict,
  type FamilyStep,
  type FamilyTest,
  type PeakCenterInputs,
  type PeriodicKind,
  type VerdictDecision,
  type VerdictInputs,
} from './rules.ts';
export { peakValues, type PeakCenterSummary, type PeakGroupMean, type PeakValues } from './peak-center.ts';
export { runScalarTest, scalarEffect, combine, assembleAveraged, rowMean, type ScalarTest, type ScalarValues } from './scalar-test.ts';
export { bandCheckFigure, type BandCheckFigure, type FigureSeries } from './figure.ts';
export {
  runPaths,
  enumeratePaths,
  PATH_DECISIONS,
  type PathDecision,
  type PathFrequency,
  pathDataNeeds,
  defaultPathChoices,
  edgeVariants,
  availableFitRanges,
  PathError,
  type PathChoices,
  type PathDataSet,
  type PathMeasure,
  type PathResult,
  type PathSpec,
  type PathRunOptions,
  type PathTest,
  type SpecificationCurve,
} from './paths.ts';
