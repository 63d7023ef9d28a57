/**
 * Robustness run on the demo cohort (issue 7 target: 48 paths × 1000 permutations under 10 s):
 * sigma 12–16 Hz in N2 over C3, C4, Cz, P3, P4, Pz (channel average), groups control vs patient.
 * Paths: measure (absolute log10 band power, relative power over 0.5–45 Hz and over 1–30 Hz,
 * residual) × reference (recorded, linked mastoids) × epoch averaging (mean, median) × band
 * edges (±1 Hz) = 4 × 2 × 2 × 3 = 48; one stored fit range (1–40 Hz), summary mean density.
 * Loading the four (reference, averaging) row sets from DuckDB is timed apart from the paths.
 * Both ways of testing a path are timed: band summary (one value per subject) and frequency-wise
 * (cluster mass over the band's bins); the summary choice is fixed, so both have 48 paths.
 */
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { edgeVariants, enumeratePaths, runPaths, type PathChoices, type PathDataSet } from '../../src/core/verdict/index.ts';
import { withDatabase } from '../../src/analysis/store-client.ts';
import { loadBandCheckData } from '../../src/queries/band-check-data.ts';
import { runs } from '../../src/queries/runs.ts';
import { cohortSchema } from '../../src/queries/schema.ts';
import { demoDatabase } from '../helpers/demo-db.ts';

export async function run(): Promise<Record<string, unknown>> {
  const db = await demoDatabase();
  const sigma = { name: 'sigma', loHz: 12, hiHz: 16 };
  const contrast = parseContrast({
    design: 'groups',
    groups: ['control', 'patient'],
    stage: 'N2',
    channels: ['C3', 'C4', 'Cz', 'P3', 'P4', 'Pz'],
    permutations: 1000,
    seed: 1,
  });
  const choices: PathChoices = {
    measures: ['absolute', 'relative', 'residual'],
    relativeDenominatorsHz: [
      [0.5, 45],
      [1, 30],
    ],
    references: ['recorded', 'linked-mastoids'],
    averagings: ['mean', 'median'],
    summaries: ['mean'],
    fitRangesHz: [[1, 40]],
    bands: edgeVariants(sigma),
  };
  const t0 = performance.now();
  const sets: PathDataSet[] = await withDatabase(db, async (client) => {
    const [schema, runList] = [await cohortSchema(client), await runs(client)];
    const out: PathDataSet[] = [];
    for (const reference of choices.references) {
      for (const averaging of choices.averagings) {
        const c = { ...contrast, reference: reference as typeof contrast.reference, averaging };
        const loaded = await loadBandCheckData(client, schema, runList, c, []);
        out.push({ reference, averaging, fitRangeHz: loaded.fitRangeHz, data: loaded.data });
      }
    }
    return out;
  });
  const loadS = (performance.now() - t0) / 1000;
  const t1 = performance.now();
  const curve = runPaths(contrast, sigma, choices, sets, { permutations: 1000 });
  const pathsS = (performance.now() - t1) / 1000;
  const t2 = performance.now();
  const fw = runPaths(contrast, sigma, choices, sets, { permutations: 1000, test: 'frequency-wise' });
  const fwS = (performance.now() - t2) / 1000;
  return {
    paths: enumeratePaths(choices).length,
    permutationsPerPath: 1000,
    pathsSeconds: Number(pathsS.toFixed(3)),
    loadSeconds: Number(loadS.toFixed(3)),
    totalSeconds: Number((loadS + pathsS).toFixed(3)),
    targetSeconds: 10,
    shareSignificant: curve.shareSignificant,
    frequencyWisePaths: fw.nPaths,
    frequencyWiseSeconds: Number(fwS.toFixed(3)),
    frequencyWiseShareSignificant: fw.shareSignificant,
    medianEffect: curve.medianEffect,
  };
}
