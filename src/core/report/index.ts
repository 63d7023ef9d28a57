/** Methods reports of compare and band-check results (pure; Node gathers the facts in src/analysis/report-facts.ts). */
export { shortMethods, wordCount, SHORT_ALPHA } from './short-methods.ts';
export { methodsReport, type MethodsReport, type MethodsParameters, type ReportableResult } from './methods.ts';
export { ingestParameterFacts, ReportInputError, type DatabaseFacts, type IngestParameterFacts, type StageEpochCounts, type WarningFacts } from './facts.ts';
export { REFERENCE_LIST, type ReferenceKey } from './references.ts';
export {
  analysisKey,
  canonicalJson,
  dataIdentity,
  fnv1a64,
  ledgerCounts,
  ledgerEntry,
  normalisedContrast,
  ANALYSIS_KINDS,
  type LedgerCounts,
  type LedgerEntry,
  type LedgerInput,
  type LedgerPart,
  type LedgerPath,
} from './ledger.ts';
