/** A cohort from a path: a folder is read as BIDS, a file as a cohort table (TSV/CSV). */
import { stat } from 'node:fs/promises';
import { discoverBids } from './bids.ts';
import { readCohortTable, type ReadCohortOptions } from './table.ts';
import type { Cohort } from './types.ts';
import { CohortError } from './types.ts';

/** `options` apply to a cohort table (BIDS discovery keeps every problem fatal). */
export async function discoverCohort(pathOrFolder: string, options: ReadCohortOptions = {}): Promise<Cohort> {
  let isDir: boolean;
  try {
    isDir = (await stat(pathOrFolder)).isDirectory();
  } catch (e) {
    throw new CohortError(pathOrFolder, [
      { row: null, column: null, message: `no cohort table or BIDS folder here: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}` },
    ]);
  }
  return isDir ? discoverBids(pathOrFolder) : readCohortTable(pathOrFolder, options);
}
