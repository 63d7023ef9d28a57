// The last result run in this tab (a band check, or a contrast its view hands over), for the
// methods report. Kept in memory only: a reload starts empty (a saved result JSON can be loaded).
import type { ReportableResult } from '../../../core/report/index.ts';

export type ResultDatabase = NonNullable<ReportableResult['database']>;

export class LastResult {
  result: ReportableResult | null = $state.raw(null);
  /** what the figures of the report should show ('session' runs keep their figure data) */
  origin: 'session' | 'file' | null = $state(null);

  remember(result: ReportableResult, origin: 'session' | 'file' = 'session'): void {
    this.result = result;
    this.origin = origin;
  }
}

export const lastResult = new LastResult();
