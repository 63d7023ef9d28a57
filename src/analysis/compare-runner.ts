/**
 * Reads what a contrast needs from a bandwise database (the named queries of src/queries over
 * Node's DuckDB) into the pure form of src/core/contrast, and runs it (its permutations on
 * several threads when it is large).
 */
import type { Contrast } from '../core/contrast/spec.ts';
import type { Exclusion } from '../core/contrast/data.ts';
import { assembleContrast, type AssembledContrast } from '../core/contrast/assemble.ts';
import { checkBandDefinition, type CompareResult } from '../core/contrast/run.ts';
import type { ProgressCallback } from '../core/stats/index.ts';
import { contrastMaxHz, loadContrastData, type LoadedContrast } from '../queries/contrast-data.ts';
import { runs } from '../queries/runs.ts';
import { cohortSchema } from '../queries/schema.ts';
import { compareOnThreads, defaultThreads, sharedAssembly } from './compare-threads.ts';
import { withDatabase } from './store-client.ts';
import { compareOnPart } from '../core/confirmation/part-result.ts';
import type { Part } from '../core/confirmation/split.ts';
import type { PartFields } from '../core/confirmation/stamp.ts';

export interface CompareRun extends CompareResult, PartFields {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown; runFinished: boolean };
}

export interface CompareOptions {
  /** threads for the permutations (default: the machine's cores for a large contrast, else 1; see compare-threads.ts) */
  threads?: number;
  /** the part of the split to read (default exploration; a split's confirmation part only for bandwise confirm) */
  part?: Part;
}

/** What a contrast reads from a database file (src/queries/contrast-data.ts over Node's DuckDB), the file closed after. */
export function readContrast(
  dbPath: string,
  c: Contrast,
  exclusions: readonly Exclusion[],
  options: { runId?: string; maxHz?: number; part?: Part } = {},
): Promise<LoadedContrast> {
  return withDatabase(dbPath, async (db) => loadContrastData(db, await cohortSchema(db), await runs(db), c, exclusions, options));
}

/**
 * The run's identity, the assembled contrast and the threads for its permutations (with more
 * than one, the assembly's matrices are in shared memory); the rows read and the unshared
 * matrices are garbage once this returns. The database is closed before the permutations, so
 * DuckDB's cached pages are not held during them; the power lists are read only up to the
 * highest frequency the measure uses (contrastMaxHz).
 */
async function loadAssembled(
  dbPath: string,
  c: Contrast,
  exclusions: Exclusion[],
  runId: string | undefined,
  threads: number | undefined,
  part: Part | undefined,
): Promise<{ info: Omit<LoadedContrast, 'data'>; assembled: AssembledContrast; threads: number }> {
  const loaded = await readContrast(dbPath, c, exclusions, { runId, maxHz: contrastMaxHz(c), part });
  const { data, ...info } = loaded;
  const assembled = assembleContrast(checkBandDefinition(c), data);
  const n = threads ?? defaultThreads(assembled, c.permutations);
  return { info, assembled: n > 1 ? sharedAssembly(assembled) : assembled, threads: n };
}

/**
 * The contrast on a database: read, assembled, then prepareAssembled + runPermutations +
 * finishCompare (src/core/contrast/run.ts) on this thread, or with the permutations split over
 * worker threads too (compare-threads.ts); either way the result equals compare() on the rows read.
 */
export async function compareDatabase(
  dbPath: string,
  c: Contrast,
  exclusions: Exclusion[],
  onProgress?: ProgressCallback,
  runId?: string,
  options: CompareOptions = {},
): Promise<CompareRun> {
  if (options.threads !== undefined && !(Number.isInteger(options.threads) && options.threads >= 1))
    throw new RangeError(`invalid number of threads: ${options.threads}`);
  const { info, assembled, threads } = await loadAssembled(dbPath, c, exclusions, runId, options.threads, options.part);
  const result = await compareOnThreads(c, assembled, threads, onProgress);
  return compareOnPart(
    {
      ...result,
      database: {
        file: dbPath.split(/[\\/]/).pop()!,
        runId: info.runId,
        toolVersion: info.toolVersion,
        ingestParameters: info.runParameters,
        runFinished: info.runFinished,
      },
    },
    info.view,
  );
}
