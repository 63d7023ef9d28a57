/**
 * The band check on a database: reads the contrast's spectra, aperiodic fits and peaks and the one
 * fit range they share (src/queries/band-check-data.ts), then runs the band check of src/core/verdict on them.
 */
import type { Contrast } from '../core/contrast/spec.ts';
import type { Exclusion } from '../core/contrast/data.ts';
import type { Band } from '../core/spectrum/bands.ts';
import { bandCheck, type BandCheckOptions, type BandCheckResult } from '../core/verdict/index.ts';
import { loadBandCheckData } from '../queries/band-check-data.ts';
import { runs } from '../queries/runs.ts';
import { cohortSchema } from '../queries/schema.ts';
import { withDatabase } from './store-client.ts';
import { bandCheckOnPart } from '../core/confirmation/part-result.ts';
import type { PartFields } from '../core/confirmation/stamp.ts';

export interface BandCheckRun extends BandCheckResult, PartFields {
  database: { file: string; runId: string; toolVersion: string; ingestParameters: unknown; runFinished: boolean };
}

export async function bandCheckDatabase(
  dbPath: string,
  c: Contrast,
  band: Band,
  exclusions: Exclusion[],
  options: Omit<BandCheckOptions, 'fitRangeHz'> = {},
  runId?: string,
): Promise<BandCheckRun> {
  const loaded = await withDatabase(dbPath, async (db) => loadBandCheckData(db, await cohortSchema(db), await runs(db), c, exclusions, runId));
  const result = bandCheck(c, band, loaded.data, { ...options, fitRangeHz: loaded.fitRangeHz });
  return bandCheckOnPart(
    {
      ...result,
      database: {
        file: dbPath.split(/[\\/]/).pop()!,
        runId: loaded.runId,
        toolVersion: loaded.toolVersion,
        ingestParameters: loaded.runParameters,
        runFinished: loaded.runFinished,
      },
    },
    loaded.view,
  );
}
