/** Node glue of the simulator: scenario files, writing cohorts, the demo. */
export { parseScenario, scenarioSchema, ScenarioFileError } from './scenario-schema.ts';
export {
  edfSpec,
  loadScenario,
  participantsTsv,
  PHYSICAL_MAX_UV,
  PHYSICAL_MIN_UV,
  recordingName,
  scoringName,
  scoringTsv,
  writeNightEdf,
  writeSimulatedCohort,
  type SimulatedCohortFiles,
  type SimulateProgress,
} from './write-cohort.ts';
export {
  DEMO_DIR,
  DEMO_INGEST_PARAMS,
  DEMO_RECORDINGS,
  DEMO_SCENARIO,
  ensureCohort,
  ensureDemoCohort,
  GENERATOR_VERSION,
  scenarioStamp,
  STAMP_FILE,
  type EnsuredCohort,
} from './demo-cohort.ts';
