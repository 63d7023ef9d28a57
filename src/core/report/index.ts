/** Methods reports of compare and band-check results (pure; Node gathers the facts in src/analysis/report-facts.ts). */
export { shortMethods, wordCount, SHORT_ALPHA } from './short-methods.ts';
export { methodsReport, type MethodsReport, type MethodsParameters, type ReportableResult } from './methods.ts';
export {
  ingestParameterFacts,
  ledgerCounts,
  ReportInputError,
  type DatabaseFacts,
  type IngestParameterFacts,
  type LedgerCounts,
  type StageEpochCounts,
  type WarningFacts,
} from './facts.ts';
export { REFERENCE_LIST, type ReferenceKey } from './references.ts';
