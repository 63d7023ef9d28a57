/**
 * `bandwise power` on a database: reads what the contrast needs (compare-runner.ts), prepares the
 * simulation (src/core/planning) and runs the simulations on one thread or several
 * (power-threads.ts); the result is the same on any number of threads.
 */
import type { Contrast } from '../core/contrast/spec.ts';
import type { Exclusion } from '../core/contrast/data.ts';
import { powerResult, preparePower, type PowerPlan, type PowerResult } from '../core/planning/index.ts';
import { readContrast } from './compare-runner.ts';
import { defaultPowerThreads, simulateOnThreads } from './power-threads.ts';

export interface PowerRun extends PowerResult {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown };
  threads: number;
  seconds: number;
}

export async function powerDatabase(
  dbPath: string,
  c: Contrast,
  plan: PowerPlan,
  exclusions: Exclusion[],
  options: { runId?: string; threads?: number; onProgress?: (done: number, total: number) => void } = {},
): Promise<PowerRun> {
  if (options.threads !== undefined && !(Number.isInteger(options.threads) && options.threads >= 1))
    throw new RangeError(`invalid number of threads: ${options.threads}`);
  const t0 = performance.now();
  const loaded = await readContrast(dbPath, c, exclusions, { runId: options.runId });
  const prepared = preparePower(c, plan, loaded.data);
  const threads = options.threads ?? defaultPowerThreads(prepared);
  const outcomes = await simulateOnThreads(prepared, threads, options.onProgress);
  return {
    ...powerResult(prepared, outcomes),
    database: { file: dbPath.split(/[\\/]/).pop()!, runId: loaded.runId, toolVersion: loaded.toolVersion, ingestParameters: loaded.runParameters },
    threads,
    seconds: (performance.now() - t0) / 1000,
  };
}
