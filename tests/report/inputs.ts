/**
 * Fixed inputs of the report tests: a band check and a compare on one simulated cohort
 * (tests/verdict/cohorts.ts, cohort 3 of the "both" scenario), ingest's default parameters, and
 * invented database facts and ledger counts.
 */
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { bandCheck } from '../../src/core/verdict/index.ts';
import type { DatabaseFacts, LedgerCounts } from '../../src/core/report/index.ts';
import { resolveIngestParams } from '../../ingest/pipeline.ts';
import { FIT_RANGE_HZ, simulateCohort } from '../verdict/cohorts.ts';

export const CONTRAST_JSON = {
  design: 'groups',
  groupColumn: 'group',
  groups: ['control', 'patient'],
  stage: 'N2',
  reference: 'recorded',
  averaging: 'mean',
  channels: ['Cz'],
  fminHz: 1,
  fmaxHz: 30,
  measure: 'log-psd',
  statistic: 'welch-t',
  correction: 'cluster-mass',
  clusterP: 0.05,
  permutations: 200,
  seed: 5,
  relativeRangeHz: [0.5, 45],
  bandMethod: 'mean',
} as const;

export const FACTS: DatabaseFacts = {
  file: 'cohort.duckdb',
  runId: 'run-0123abcd',
  toolVersion: '0.1.0',
  ingestParameters: JSON.parse(JSON.stringify(resolveIngestParams({ references: ['recorded', 'linked-mastoids'] }))),
  recordings: 40,
  samplingRatesHz: [128, 256],
  channelsPerRecording: { min: 13, max: 13 },
  epochs: [
    { stage: 'N2', channelEpochs: 52000, rejected: 1300, byReason: { amplitude: 400, 'broadband-outlier': 700, 'muscle-outlier': 200 } },
    { stage: 'N3', channelEpochs: 26000, rejected: 260, byReason: { amplitude: 260 } },
  ],
  fitRangesHz: [[1, 40]],
  warnings: { byStep: { channels: 2, read: 3, scoring: 4 }, recordingsByStatus: { ok: 35, 'ok-with-warnings': 2, 'partial-data': 1, 'partial-scoring': 2 } },
};

export const LEDGER: LedgerCounts = { analyses: 7, significant: 3, byKind: { compare: 5, 'band-check': 2 }, repeats: 0 };

export function fixedResults() {
  const contrast = parseContrast(CONTRAST_JSON);
  const data = simulateCohort('both', 3);
  const check = bandCheck(contrast, { name: 'sigma', loHz: 12, hiHz: 16 }, data, { fitRangeHz: FIT_RANGE_HZ });
  const cmp = compare(contrast, data);
  return { contrast, check, cmp };
}
