// The spectral estimator in the named queries: which are stored, and the condition on the
// estimator column of spectra, aperiodic and peaks. A database written before the column existed
// holds Welch rows only (docs/design.md), so there 'welch' needs no condition.
import { COHORT, literal, texts, type SqlClient } from './client.ts';
import type { CohortSchema } from './schema.ts';

/** The estimator to filter on, or null where the database has no estimator column (all Welch); multitaper is refused there. */
export function storedEstimator(schema: CohortSchema, estimator: string): string | null {
  if (schema.has('spectra', 'estimator')) return estimator;
  if (estimator === 'welch') return null;
  throw new Error('this database was written before multitaper spectra existed: it holds Welch spectra only (ingest again with --estimator welch,multitaper)');
}

/** " AND <column> = '<estimator>'", or nothing for null (see storedEstimator); undefined means Welch. */
export function estimatorCondition(column: string, estimator: string | null | undefined): string {
  return estimator === null ? '' : ` AND ${column} = ${literal(estimator ?? 'welch')}`;
}

/** The estimators the spectra table holds, Welch first. */
export async function storedEstimators(db: SqlClient, schema: CohortSchema): Promise<string[]> {
  if (!schema.has('spectra', 'estimator')) return ['welch'];
  const found = texts(await db.query(`SELECT DISTINCT estimator::VARCHAR AS e FROM ${COHORT}.spectra ORDER BY e DESC`), 'e');
  return found.length > 0 ? found : ['welch'];
}
