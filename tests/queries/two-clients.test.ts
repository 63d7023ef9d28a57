// Every named query of src/queries run through both clients on the demo database
// (tests/helpers/demo-db.ts): the Node adapter (src/analysis/store-client.ts over @duckdb/node-api
// 1.5, the ingest store's connection) and the dashboard's adapter (src/dashboard/db/arrow-client.ts
// over duckdb-wasm 1.32 = DuckDB 1.4.3, the browser's engine, here its blocking node build). Two
// DuckDB builds with two result formats (node-api vectors, Arrow) must hand back the same plain
// values and the same Float32 lists, bit for bit. A guard fails when src/queries exports a query
// this table does not run. Anchors from the demo's own description: demo-cohort/participants.tsv
// lists 36 participants with one recording each; demo-cohort/scenario.json has 13 EEG channels.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore, type Store } from '../../ingest/store/index.ts';
import { storeClient } from '../../src/analysis/store-client.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import type { Stage } from '../../src/core/stages.ts';
import * as bandCheckData from '../../src/queries/band-check-data.ts';
import type { SqlClient } from '../../src/queries/client.ts';
import * as cohort from '../../src/queries/cohort.ts';
import * as contrastData from '../../src/queries/contrast-data.ts';
import * as fits from '../../src/queries/fits.ts';
import * as night from '../../src/queries/night.ts';
import * as positions from '../../src/queries/positions.ts';
import * as quality from '../../src/queries/quality.ts';
import * as reportFacts from '../../src/queries/report-facts.ts';
import * as runsModule from '../../src/queries/runs.ts';
import * as schemaModule from '../../src/queries/schema.ts';
import * as spectra from '../../src/queries/spectra.ts';
import * as workflow from '../../src/queries/workflow.ts';
import { demoDatabase } from '../helpers/demo-db.ts';
import { wasmClientFor } from '../dashboard/wasm-client.ts';

const MODULES = { bandCheckData, cohort, contrastData, fits, night, positions, quality, reportFacts, runsModule, schemaModule, spectra, workflow };
/** Exported functions that run no SQL (they choose or compute from what a query returned). */
const NOT_QUERIES = new Set(['chooseRun', 'binsUpTo', 'contrastMaxHz', 'contrastStages', 'groupingColumns', 'CohortSchema', 'partViewOf']);

/** What a query call may use besides its client: read through that same client. */
interface Context {
  schema: schemaModule.CohortSchema;
  runList: runsModule.RunInfo[];
  runId: string;
  recordingId: string;
}

const key =
  (stage: Stage, reference = 'recorded', averaging = 'mean') =>
  (ctx: Context) => ({ runId: ctx.runId, stage, reference, averaging });
const sigma = parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2', channels: ['C3', 'C4', 'Cz', 'P3', 'P4', 'Pz'] });
const contrasts = {
  'log-psd N2': parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2', fmaxHz: 30 }),
  'residual paired N2/N3 linked-mastoids': parseContrast({ design: 'paired', stages: ['N2', 'N3'], measure: 'residual', reference: 'linked-mastoids' }),
  'peak-height N2': parseContrast({
    design: 'groups',
    groups: ['control', 'patient'],
    stage: 'N2',
    measure: 'peak-height',
    bands: [{ name: 'sigma', loHz: 12, hiHz: 16 }],
  }),
  'exponent N3 median': parseContrast({ design: 'covariate', covariate: 'age', stage: 'N3', measure: 'exponent', averaging: 'median' }),
};
const exclusions = [{ subject: 'ctl01', channel: null, reason: 'test exclusion' }];

/** Each named query, called with the demo's values; several calls where the arguments change what the SQL says. */
const CALLS: Record<string, (db: SqlClient, ctx: Context) => Promise<unknown>>[] = [
  {
    cohortSchema: (db) => schemaModule.cohortSchema(db),
    runs: (db) => runsModule.runs(db),
  },
  {
    participants: (db, ctx) => cohort.participants(db, ctx.schema),
    groupSizes: async (db, ctx) => [
      await cohort.groupSizes(db, ctx.schema, null),
      await cohort.groupSizes(db, ctx.schema, 'group'),
      await cohort.groupSizes(db, ctx.schema, 'sex'),
    ],
    recordingsOverview: async (db, ctx) => [await cohort.recordingsOverview(db, ctx.schema, 'group'), await cohort.recordingsOverview(db, ctx.schema, null)],
    ingestErrors: (db, ctx) => cohort.ingestErrors(db, ctx.schema),
    sleepArchitectureBySubject: (db, ctx) => cohort.sleepArchitectureBySubject(db, ctx.runId),
  },
  {
    spectraRows: async (db, ctx) => [
      await spectra.spectraRows(db, key('N2')(ctx)),
      await spectra.spectraRows(db, key('N2')(ctx), 30),
      await spectra.spectraRows(db, key('N3', 'linked-mastoids', 'median')(ctx), 12.3),
      await spectra.spectraRows(db, key('N2', 'average')(ctx)),
    ],
    channelSpectra: (db) => spectra.channelSpectra(db, { channel: 'C3', stage: 'N2', reference: 'recorded', averaging: 'mean' }),
    storedReferences: (db, ctx) => spectra.storedReferences(db, ctx.runId),
  },
  {
    aperiodicRows: async (db, ctx) => [
      await fits.aperiodicRows(db, key('N2')(ctx), 'fit'),
      await fits.aperiodicRows(db, key('R', 'linked-mastoids', 'median')(ctx), 'fit'),
    ],
    aperiodicInFitRange: async (db, ctx) => {
      const [range] = await fits.storedFitRanges(db, ctx.runId, 'N2', 'recorded', 'mean', 'fit');
      return fits.aperiodicInFitRange(db, key('N2')(ctx), 'fit', range);
    },
    peakRows: (db, ctx) => fits.peakRows(db, key('N2')(ctx), 'fit'),
    storedFitRanges: (db, ctx) => fits.storedFitRanges(db, ctx.runId, 'N2', 'recorded', 'mean', 'fit'),
    fitRangeChoices: (db, ctx) => fits.fitRangeChoices(db, ctx.runList, 'N2', 'fit'),
    recordedReferences: (db, ctx) => fits.recordedReferences(db, ctx.runId),
    channelPositions: (db, ctx) => positions.channelPositions(db, ctx.runId),
  },
  {
    recordingCount: (db, ctx) => reportFacts.recordingCount(db, ctx.runId),
    samplingRates: (db, ctx) => reportFacts.samplingRates(db, ctx.runId),
    channelsPerRecording: (db, ctx) => reportFacts.channelsPerRecording(db, ctx.runId),
    stageEpochCounts: (db, ctx) => reportFacts.stageEpochCounts(db, ctx.runId),
    recordedDerivations: (db, ctx) => reportFacts.recordedDerivations(db, ctx.runId),
    warningFacts: (db, ctx) => reportFacts.warningFacts(db, ctx.runId),
    databaseFacts: (db, ctx) => reportFacts.databaseFacts(db, '/some/folder/demo.duckdb', ctx.runList, sigma),
  },
  {
    qualityRows: (db, ctx) => quality.qualityRows(db, ctx.schema),
    recordingSubjects: (db) => quality.recordingSubjects(db),
    channelList: (db) => quality.channelList(db),
    spectraChoices: (db) => quality.spectraChoices(db),
    recordingEpochs: (db, ctx) => quality.recordingEpochs(db, ctx.recordingId, 'C3'),
    epochBandPower: (db, ctx) => quality.epochBandPower(db, ctx.schema, ctx.recordingId, 'C3', 'recorded'),
    // the demo stores no epoch spectra: both answer null; the decoded values over both engines: tests/dashboard/night-spectra.test.ts
    nightSpectra: (db, ctx) => night.nightSpectra(db, ctx.schema, ctx.recordingId, 'C3'),
  },
  {
    contrastParticipants: (db, ctx) => contrastData.contrastParticipants(db, ctx.schema),
    loadContrastData: async (db, ctx) => {
      const out = [];
      for (const c of Object.values(contrasts))
        out.push(await contrastData.loadContrastData(db, ctx.schema, ctx.runList, c, exclusions, { maxHz: contrastData.contrastMaxHz(c) }));
      return out;
    },
    loadBandCheckData: (db, ctx) => bandCheckData.loadBandCheckData(db, ctx.schema, ctx.runList, sigma, exclusions, ctx.runId),
    loadPathDataSets: (db, ctx) =>
      bandCheckData.loadPathDataSets(
        db,
        ctx.schema,
        ctx.runList,
        sigma,
        [
          { reference: 'recorded', averaging: 'mean' },
          { reference: 'linked-mastoids', averaging: 'median' },
        ],
        exclusions,
      ),
  },
  {
    // the demo has no split: both answer "no split"; the split's own rows over both engines: tests/dashboard/workflow.test.ts
    readWorkflow: (db, ctx) => workflow.readWorkflow(db, ctx.schema),
    workflowOf: (db, ctx) => workflow.workflowOf(db, ctx.schema),
  },
];
const calls = Object.assign({}, ...CALLS) as Record<string, (db: SqlClient, ctx: Context) => Promise<unknown>>;

async function contextOf(db: SqlClient): Promise<Context> {
  const runList = await runsModule.runs(db);
  return {
    schema: await schemaModule.cohortSchema(db),
    runList,
    runId: runsModule.chooseRun(runList).runId,
    recordingId: (await quality.recordingSubjects(db))[0].recordingId,
  };
}

/** Every cell of a result, so a query that returns nothing cannot pass as equal. */
function size(v: unknown): number {
  if (v === null || typeof v !== 'object') return 1;
  if (ArrayBuffer.isView(v)) return (v as Float32Array).length;
  if (v instanceof Map) return [...v.values()].reduce((s: number, x) => s + size(x), 0);
  return Object.values(v).reduce((s: number, x) => s + size(x), 0);
}

describe('every named query gives the same answer through the Node client and the duckdb-wasm client (demo database)', () => {
  let store: Store;
  let node: SqlClient;
  let wasm: Awaited<ReturnType<typeof wasmClientFor>>;
  let nodeCtx: Context;
  let wasmCtx: Context;

  beforeAll(async () => {
    const file = await demoDatabase();
    store = await openStore(file, { readOnly: true });
    node = storeClient(store);
    wasm = await wasmClientFor(file);
    nodeCtx = await contextOf(node);
    wasmCtx = await contextOf(wasm);
  });

  afterAll(async () => {
    wasm?.close();
    await store?.close();
  });

  it('runs every exported query of src/queries', () => {
    const exported = Object.values(MODULES).flatMap((m) =>
      Object.entries(m)
        .filter(([, v]) => typeof v === 'function')
        .map(([name]) => name),
    );
    expect(exported.filter((name) => !NOT_QUERIES.has(name)).sort()).toEqual(Object.keys(calls).sort());
  });

  it('the demo has what the queries read: one run, 36 recordings, 13 EEG channels', async () => {
    expect(nodeCtx.runList).toHaveLength(1);
    expect(await reportFacts.recordingCount(node, nodeCtx.runId)).toBe(36);
    expect((await quality.channelList(node)).map((c) => c.channel).sort()).toEqual([
      'C3',
      'C4',
      'Cz',
      'F3',
      'F4',
      'Fz',
      'M1',
      'M2',
      'O1',
      'O2',
      'P3',
      'P4',
      'Pz',
    ]);
  });

  for (const name of Object.keys(calls)) {
    it(name, async () => {
      const a = await calls[name](node, nodeCtx);
      const b = await calls[name](wasm, wasmCtx);
      // ingest_errors is empty on the demo (every recording ingests); everything else holds rows
      if (name !== 'ingestErrors') expect(size(a)).toBeGreaterThan(0);
      expect(a).toEqual(b);
    });
  }

  it('list reads, streamed or whole, give the same lists on both clients (every stored spectrum, several batches)', async () => {
    const sql = 'SELECT recording_id, channel, stage, reference, averaging, power FROM cohort.spectra';
    const read = async (db: SqlClient, stream: boolean) => {
      const lists = new Map<string, number[]>();
      let batches = 0;
      for await (const batch of db.listBatches(sql, 'power', 181, { stream })) {
        batches++;
        for (let i = 0; i < batch.rowCount; i++) {
          const k = ['recording_id', 'channel', 'stage', 'reference', 'averaging'].map((c) => batch.columns[c][i]).join('|');
          lists.set(k, Array.from(batch.values.subarray(i * 181, (i + 1) * 181)));
        }
      }
      return { lists, batches };
    };
    const whole = await read(node, false);
    // 36 recordings × 13 channels × 5 stages × 2 references × 2 averagings at most (a stage a night lacks is not stored)
    expect(whole.lists.size).toBeGreaterThan(2048);
    expect(whole.batches).toBeGreaterThan(1);
    for (const other of [await read(node, true), await read(wasm, false), await read(wasm, true)]) expect(other.lists).toEqual(whole.lists);
    await expect(async () => {
      for await (const batch of node.listBatches(sql, 'power', 180, { stream: false })) expect(batch).toBeUndefined();
    }).rejects.toThrow(/expected 180 values, got 181/);
    await expect(async () => {
      for await (const batch of wasm.listBatches(sql, 'power', 180, { stream: true })) expect(batch).toBeUndefined();
    }).rejects.toThrow(/expected 180 values, got 181/);
  });
});
