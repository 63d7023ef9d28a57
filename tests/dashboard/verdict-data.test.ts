// The band check, robustness and report data (src/queries) as the dashboard reads them over
// duckdb-wasm (the browser's engine) against the command line's readings over @duckdb/node-api
// (another DuckDB build: bandwise band-check's bandCheckDatabase and the report's
// databaseFactsOf) on the shared demo database (tests/helpers/demo-db.ts): the same band check,
// robustness row sets equal to the band check's rows for each (reference, averaging) (their fitted
// peaks too, which a path decided on power and frequency reads), the same facts. 200
// permutations per test (the equality does not depend on the count; kept small for time).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bandCheckDatabase } from '../../src/analysis/band-check-runner.ts';
import { databaseFactsOf } from '../../src/analysis/report-facts.ts';
import { withDatabase } from '../../src/analysis/store-client.ts';
import type { ContrastData } from '../../src/core/contrast/data.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { bandCheck, edgeVariants, runPaths, type PathChoices, type PathDataSet } from '../../src/core/verdict/index.ts';
import { loadBandCheckData, loadPathDataSets } from '../../src/queries/band-check-data.ts';
import { participants } from '../../src/queries/cohort.ts';
import { fitRangeChoices, storedFitRanges } from '../../src/queries/fits.ts';
import { databaseFacts } from '../../src/queries/report-facts.ts';
import { runs, type RunInfo } from '../../src/queries/runs.ts';
import { cohortSchema, type CohortSchema } from '../../src/queries/schema.ts';
import { demoDatabase } from '../helpers/demo-db.ts';
import { wasmClientFor } from './wasm-client.ts';

const plainRows = (d: ContrastData) => d.spectra.rows.map((r) => ({ ...r, power: Array.from(r.power) }));
const bySubject = (x: ContrastData['participants']) => [...x].sort((p, q) => String(p.subject).localeCompare(String(q.subject)));

function expectSameData(a: ContrastData, b: ContrastData): void {
  expect([a.spectra.freqStartHz, a.spectra.freqStepHz, a.spectra.nBins]).toEqual([b.spectra.freqStartHz, b.spectra.freqStepHz, b.spectra.nBins]);
  expect(plainRows(a)).toEqual(plainRows(b));
  expect(a.aperiodic).toEqual(b.aperiodic);
  expect(bySubject(a.participants)).toEqual(bySubject(b.participants));
  expect(a.exclusions).toEqual(b.exclusions);
}

describe("band check, robustness and report data over duckdb-wasm equal the command line's on the demo database", () => {
  let file: string;
  let client: Awaited<ReturnType<typeof wasmClientFor>>;
  let schema: CohortSchema;
  let runList: RunInfo[];
  let excluded = '';
  let exclusions: { subject: string; channel: null; reason: string }[] = [];
  const sigma = parseContrast({
    design: 'groups',
    groups: ['control', 'patient'],
    stage: 'N2',
    channels: ['C3', 'C4', 'Cz', 'P3', 'P4', 'Pz'],
    permutations: 200,
    seed: 3,
  });

  beforeAll(async () => {
    file = await demoDatabase();
    client = await wasmClientFor(file);
    schema = await cohortSchema(client);
    runList = await runs(client);
    // leave out the first participant of the table
    excluded = String((await participants(client, schema)).rows[0].subject);
    exclusions = [{ subject: excluded, channel: null, reason: 'test exclusion' }];
  });

  afterAll(() => client?.close());

  it('the band check on the rows the dashboard reads equals bandwise band-check on the database', async () => {
    const ours = await loadBandCheckData(client, schema, runList, sigma, exclusions);
    expect(ours.data.peaks.length).toBeGreaterThan(0);
    const band = { name: 'sigma', loHz: 12, hiHz: 16 };
    const a = bandCheck(sigma, band, ours.data, { fitRangeHz: ours.fitRangeHz });
    const b = await bandCheckDatabase(file, sigma, band, exclusions);
    expect(b.database).toEqual({
      file: file.split('/').pop(),
      runId: ours.runId,
      toolVersion: ours.toolVersion,
      ingestParameters: ours.runParameters,
      runFinished: true,
    });
    expect(a.verdict).toBe(b.verdict);
    expect(a.family).toEqual(b.family);
    expect(a.tests).toEqual(b.tests);
    expect(a.exclusions.some((e) => e.subject === excluded)).toBe(true);
  });

  it('robustness row sets: one per stored (reference, averaging, fit range), equal to the band check rows read by the command line; same curve', async () => {
    const needs = [
      { reference: 'recorded', averaging: 'mean' as const },
      { reference: 'linked-mastoids', averaging: 'median' as const },
    ];
    const sets = await loadPathDataSets(client, schema, runList, sigma, needs, exclusions);
    const theirs: PathDataSet[] = await withDatabase(file, async (node) => {
      const out: PathDataSet[] = [];
      for (const n of needs) {
        const loaded = await loadBandCheckData(
          node,
          await cohortSchema(node),
          await runs(node),
          { ...sigma, reference: n.reference as typeof sigma.reference, averaging: n.averaging },
          exclusions,
        );
        out.push({ ...n, fitRangeHz: loaded.fitRangeHz, data: loaded.data });
      }
      return out;
    });
    // the demo stores one fit range per (reference, averaging), so one set each
    expect(sets.map((s) => [s.reference, s.averaging, s.fitRangeHz])).toEqual(theirs.map((s) => [s.reference, s.averaging, s.fitRangeHz]));
    for (let i = 0; i < sets.length; i++) {
      expectSameData(sets[i].data, theirs[i].data);
      // the fitted peaks a path decided on power and frequency needs (the band check's own rows)
      expect(sets[i].data.peaks).toEqual(theirs[i].data.peaks);
      expect(sets[i].data.peaks.length).toBeGreaterThan(0);
    }
    expect(await fitRangeChoices(client, runList, 'N2', 'fit')).toEqual([theirs[0].fitRangeHz]);
    // paths over the recorded/mean set only (the other loaded pair is compared row by row above)
    const choices: PathChoices = {
      measures: ['absolute', 'relative', 'residual'],
      relativeDenominatorsHz: [[0.5, 45]],
      references: ['recorded'],
      averagings: ['mean'],
      summaries: ['mean'],
      fitRangesHz: [theirs[0].fitRangeHz!],
      bands: edgeVariants({ name: 'sigma', loHz: 12, hiHz: 16 }),
    };
    const a = runPaths(sigma, { name: 'sigma', loHz: 12, hiHz: 16 }, choices, sets);
    const b = runPaths(sigma, { name: 'sigma', loHz: 12, hiHz: 16 }, choices, theirs);
    expect(a.nPaths).toBe(9); // 3 measures × 3 band edge variants
    expect(a.paths).toEqual(b.paths);
    // decided on power only and on power and the peak centre: twice the paths, each frequency path with its centre test
    const both = { ...choices, decisions: ['power', 'power-and-frequency'] as PathChoices['decisions'] };
    const c = runPaths(sigma, { name: 'sigma', loHz: 12, hiHz: 16 }, both, sets);
    expect(c.nPaths).toBe(18);
    expect(c.paths.filter((p) => p.frequency).length).toBe(9);
    expect(c.paths).toEqual(runPaths(sigma, { name: 'sigma', loHz: 12, hiHz: 16 }, both, theirs).paths);
  });

  it('database facts for the methods report equal those bandwise report gathers (databaseFactsOf)', async () => {
    const theirs = await databaseFactsOf(file, sigma);
    const ours = await databaseFacts(client, `http://127.0.0.1:1/data/${file.split('/').pop()}`, runList, sigma);
    expect(ours).toEqual(theirs);
    expect(ours.recordings).toBe(36); // demo-cohort/participants.tsv lists 36 participants, one recording each
    // demo-cohort/scenario.json: 13 EEG channels, every one recorded against the electrode labelled REF
    const demoChannels = ['C3', 'C4', 'Cz', 'F3', 'F4', 'Fz', 'M1', 'M2', 'O1', 'O2', 'P3', 'P4', 'Pz'];
    expect(ours.recordedDerivations).toEqual(demoChannels.map((channel) => ({ channel, referenceElectrode: 'REF', recordings: 36 })));
    expect(await storedFitRanges(client, ours.runId, 'N2', 'recorded', 'mean', 'fit')).toEqual(ours.fitRangesHz);
  });
});
