/**
 * `bandwise deviation` on a database: reads the stage's spectra (and aperiodic fits or peaks when
 * the measure needs them) and the participants (compare-runner.ts's readContrast, with the measure
 * part of the settings as a contrast), then scores every subject (src/core/planning deviation).
 */
import type { Exclusion } from '../core/contrast/data.ts';
import { deviation, measureContrast, type DeviationResult, type DeviationSpec } from '../core/planning/index.ts';
import { readContrast } from './compare-runner.ts';

export interface DeviationRun extends DeviationResult {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown };
}

export async function deviationDatabase(dbPath: string, spec: DeviationSpec, exclusions: Exclusion[], runId?: string): Promise<DeviationRun> {
  const loaded = await readContrast(dbPath, measureContrast(spec), exclusions, { runId });
  return {
    ...deviation(spec, loaded.data),
    database: { file: dbPath.split(/[\\/]/).pop()!, runId: loaded.runId, toolVersion: loaded.toolVersion, ingestParameters: loaded.runParameters },
  };
}
