// Readers of the spectra table when channels of one recording have different lengths (each stored
// up to its own Nyquist frequency): the named queries of src/queries (spectra, the contrast loader,
// the report facts) through Node's DuckDB (the command line) and through duckdb-wasm (the
// dashboard), and the dashboard's spectra view. Four invented subjects, each a
// libedf-written recording with EEG at 256 Hz and EMG at 1, 20, 64 and 512 Hz (tests/ingest/mixed-rates.ts).
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DuckDBInstance } from '@duckdb/node-api';
import { assembleContrast } from '../../src/core/contrast/assemble.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { methodsReport } from '../../src/core/report/index.ts';
import { loadContrastData } from '../../src/queries/contrast-data.ts';
import { runs } from '../../src/queries/runs.ts';
import { cohortSchema } from '../../src/queries/schema.ts';
import { databaseFacts } from '../../src/queries/report-facts.ts';
import { spectraRows } from '../../src/queries/spectra.ts';
import { loadSpectraRows } from '../../src/dashboard/views/spectra/spectra-data.ts';
import { compareDatabase } from '../../src/analysis/compare-runner.ts';
import { withDatabase } from '../../src/analysis/store-client.ts';
import { runIngest } from '../../ingest/run.ts';
import { makeTmpDir } from '../edf/helpers.ts';
import { wasmClientFor } from '../dashboard/wasm-client.ts';
import { writeMixedRates } from './mixed-rates.ts';

const SUBJECTS = [
  ['s1', 'control'],
  ['s2', 'control'],
  ['s3', 'patient'],
  ['s4', 'patient'],
];
let tmp: ReturnType<typeof makeTmpDir>;
let db: string;
let client: Awaited<ReturnType<typeof wasmClientFor>>;
/** Every stored N2/recorded/mean list, by subject and channel, as node-api reads it. */
const stored = new Map<string, number[]>();

const contrast = (over: Record<string, unknown>) =>
  parseContrast({
    design: 'groups',
    groupColumn: 'group',
    groups: ['control', 'patient'],
    stage: 'N2',
    reference: 'recorded',
    averaging: 'mean',
    channels: 'all',
    fminHz: 1,
    fmaxHz: 30,
    measure: 'log-psd',
    statistic: 'welch-t',
    correction: 'cluster-mass',
    clusterP: 0.05,
    permutations: 20,
    seed: 1,
    ...over,
  });

beforeAll(async () => {
  tmp = makeTmpDir('mixed-readers');
  SUBJECTS.forEach(([s], i) => writeMixedRates(tmp.dir, s, i));
  const table = path.join(tmp.dir, 'cohort.tsv');
  writeFileSync(table, ['subject\tgroup\trecording', ...SUBJECTS.map(([s, g]) => `${s}\t${g}\t${s}.edf`)].join('\n') + '\n');
  db = path.join(tmp.dir, 'mixed.duckdb');
  const summary = await runIngest(table, db, { jobs: 2, params: { channelTypes: ['EEG', 'EMG'], minEpochs: 2 } });
  expect(summary.failed).toEqual([]);
  const inst = await DuckDBInstance.create(db, { access_mode: 'READ_ONLY' });
  const c = await inst.connect();
  const r = await c.runAndReadAll(
    "SELECT r.subject, s.channel, s.power FROM spectra s JOIN recordings r USING (recording_id) WHERE s.stage = 'N2' AND s.reference = 'recorded' AND s.averaging = 'mean'",
  );
  for (const [id, ch, p] of r.getRowsJson()) stored.set(`${id}|${ch}`, (p as number[]).map(Number));
  c.closeSync();
  inst.closeSync();
  client = await wasmClientFor(db);
}, 240_000);
afterAll(() => {
  client?.close();
  tmp?.cleanup();
});

describe('spectra of one recording with different lengths', () => {
  it('are stored per channel to its own Nyquist frequency', () => {
    const lengths = new Map<string, number>();
    for (const [k, p] of stored) lengths.set(k.split('|')[1], p.length);
    // 0.25-Hz bins: 0–45 Hz = 181, 0–32 Hz (64 Hz) = 129, 0–10 Hz (20 Hz) = 41, 0–0.5 Hz (1 Hz) = 3
    expect(Object.fromEntries([...lengths].sort())).toEqual({ C3: 181, C4: 181, Chin: 41, Fast: 181, Leg: 129, Slow: 3 });
  });

  it("the command line reads the channels that reach the recording's range, or the channels asked for", async () => {
    await withDatabase(db, async (node) => {
      const runId = (await runs(node))[0].runId;
      const all = await spectraRows(node, { runId, stage: 'N2', reference: 'recorded', averaging: 'mean' });
      expect(all.nBins).toBe(181);
      expect([...new Set(all.rows.map((r) => r.channel))].sort()).toEqual(['C3', 'C4', 'Fast']);
      expect(all.rows.length).toBe(12);
      // every row equals the list node-api read for its subject and channel
      for (const r of all.rows) expect(Array.from(r.power), `${r.subject} ${r.channel}`).toEqual(stored.get(`${r.subject}|${r.channel}`));
      const chin = await spectraRows(node, { runId, stage: 'N2', reference: 'recorded', averaging: 'mean', channels: ['Chin'] });
      expect([chin.nBins, chin.rows.map((r) => r.channel)]).toEqual([41, ['Chin', 'Chin', 'Chin', 'Chin']]);
      expect(Array.from(chin.rows[0].power)).toEqual(stored.get(`${chin.rows[0].subject}|Chin`));
    });
  });

  it('a contrast over all channels reads the EEG and the fast EMG; over the EEG, and over the 20-Hz EMG alone on its own range, it runs; both sides load the same', async () => {
    const runList = await runs(client);
    const schema = await cohortSchema(client);
    for (const c of [contrast({}), contrast({ channels: ['C3', 'C4'] }), contrast({ channels: ['Chin'], fmaxHz: 8 })]) {
      const cli = await withDatabase(db, async (node) => loadContrastData(node, await cohortSchema(node), await runs(node), c, []));
      const web = await loadContrastData(client, schema, runList, c, []);
      expect(web.data.spectra.nBins).toBe(cli.data.spectra.nBins);
      const key = (r: { subject: string; channel: string }) => `${r.subject}|${r.channel}`;
      expect(web.data.spectra.rows.map(key).sort()).toEqual(cli.data.spectra.rows.map(key).sort());
      if (c.channels === 'all') {
        // the fast EMG has no 10-10 position: a spatial contrast over it needs positions or a neighbour table
        expect(() => assembleContrast(c, cli.data)).toThrow(/channels Fast have no position and no neighbour table/);
        continue;
      }
      const assembled = assembleContrast(c, cli.data);
      expect(assembled.channels).toEqual(c.channels);
      expect(assembled.nPerGroup).toEqual({ control: 2, patient: 2 });
      const run = compareDatabase(db, c, [], undefined, undefined, { threads: 1 });
      if (c.channels.includes('Chin')) {
        // the invented subjects differ only in their EEG's scale (tests/ingest/mixed-rates.ts): the
        // chin EMG is the same in all four, so the command refuses data that do not vary, in one sentence
        await expect(run).rejects.toThrow(/the data do not vary/);
      } else {
        expect((await run).n).toEqual({ control: 2, patient: 2 });
      }
    }
  });

  it("the dashboard's spectra view loads them", async () => {
    const rows = await loadSpectraRows(client, await cohortSchema(client), await runs(client), { stage: 'N2', reference: 'recorded', averaging: 'mean' });
    expect(rows.nBins).toBe(181);
    expect(rows.channels.sort()).toEqual(['C3', 'C4', 'Fast']);
  });

  it('the report facts of both sides agree, and the methods text states the fit ranges, the Nyquist rule and the warnings', async () => {
    const c = contrast({ channels: ['C3', 'C4'] });
    const cli = await withDatabase(db, async (node) => databaseFacts(node, db, await runs(node), c));
    const web = await databaseFacts(client, db, await runs(client), c);
    expect(web).toEqual(cli);
    expect(cli.samplingRatesHz).toEqual([1, 20, 64, 256, 512]);
    expect(cli.fitRangesHz).toEqual([
      [1, 10],
      [1, 32],
      [1, 40],
    ]); // Chin, Leg, the rest; the 1-Hz channel has none
    expect(cli.warnings.recordingsByStatus).toEqual({ 'ok-with-warnings': 4 });
    const text = methodsReport(await compareDatabase(db, c, [], undefined, undefined, { threads: 1 }), cli, null).markdown;
    expect(text).toContain('each channel at most up to its own Nyquist frequency');
    expect(text).toContain('None of the 4 recordings is partial and 4 are complete with warnings.');
  });
});
