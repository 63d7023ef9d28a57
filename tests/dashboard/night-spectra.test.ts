// The whole-night query (src/queries/night.ts) on a small synthetic store (night-store.ts),
// through both clients (Node @duckdb/node-api and the dashboard's duckdb-wasm adapter): the
// decoded log10 power matches numpy's float64 log10 of the full-precision power to within the
// stated quantisation error, half a step (uniform quantisation, common practice; README "The
// database": at most (row maximum − minimum)/131070 log10 units).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore, type Store } from '../../ingest/store/index.ts';
import { storeClient } from '../../src/analysis/store-client.ts';
import type { SqlClient } from '../../src/queries/client.ts';
import { nightSpectra } from '../../src/queries/night.ts';
import { CohortSchema, cohortSchema } from '../../src/queries/schema.ts';
import { runPython } from '../helpers/python.ts';
import { GAP, NIGHT_RECORDING, N_BINS, N_EPOCHS, STEP_HZ, nightPower, writeNightStore } from './night-store.ts';
import { wasmClientFor } from './wasm-client.ts';

describe('nightSpectra: each stored epoch spectrum of one recording × channel, decoded', () => {
  let dir: string;
  let store: Store;
  let wasm: Awaited<ReturnType<typeof wasmClientFor>>;
  let clients: [string, SqlClient][];

  beforeAll(async () => {
    dir = mkdtempSync(path.join(tmpdir(), 'bw-night-'));
    const file = await writeNightStore(dir);
    store = await openStore(file, { readOnly: true });
    wasm = await wasmClientFor(file);
    clients = [
      ['node', storeClient(store)],
      ['wasm', wasm],
    ];
  });

  afterAll(async () => {
    wasm?.close();
    await store?.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('gives every stored epoch with its axis, and log10 power within half a quantisation step of numpy on both clients', async () => {
    const epochs = Array.from({ length: N_EPOCHS }, (_, e) => e).filter((e) => !GAP.includes(e));
    const power = epochs.flatMap((e) => Array.from({ length: N_BINS }, (_, b) => nightPower(e, b)));
    const exact = runPython<number[]>(`print(json.dumps(numpy.log10(numpy.fromfile(inputs['p'])).tolist()))`, { p: power });
    const answers = [];
    for (const [name, db] of clients) {
      const night = await nightSpectra(db, await cohortSchema(db), NIGHT_RECORDING, 'C3');
      expect(night, name).not.toBeNull();
      expect(night!.epochs).toEqual(epochs);
      expect([night!.freqStartHz, night!.freqStepHz, night!.nBins]).toEqual([0, STEP_HZ, N_BINS]);
      let worst = 0;
      for (let r = 0; r < epochs.length; r++) {
        // the row's range over 65535 levels, halved: the stated bound, to 32-bit rounding of lo and step
        let min = Infinity;
        let max = -Infinity;
        for (let b = 0; b < N_BINS; b++) [min, max] = [Math.min(min, exact[r * N_BINS + b]), Math.max(max, exact[r * N_BINS + b])];
        expect(night!.maxErrorLog10[r]).toBeLessThanOrEqual(((max - min) / 131070) * (1 + 1e-6));
        for (let b = 0; b < N_BINS; b++) worst = Math.max(worst, Math.abs(night!.log10Power[r * N_BINS + b] - exact[r * N_BINS + b]) / night!.maxErrorLog10[r]);
      }
      expect(worst, name).toBeLessThanOrEqual(1 + 1e-6);
      expect(worst, name).toBeGreaterThan(0.1); // the values are quantised, not the full-precision ones
      answers.push(night);
    }
    expect(answers[0]).toEqual(answers[1]);
  });

  it('is null for a channel without epoch spectra and for a database without the table', async () => {
    for (const [, db] of clients) {
      const schema = await cohortSchema(db);
      expect(await nightSpectra(db, schema, NIGHT_RECORDING, 'O1')).toBeNull();
      expect(await nightSpectra(db, schema, 'no-such-recording', 'C3')).toBeNull();
      const older = new CohortSchema(new Map([...schema.tables].filter(([t]) => t !== 'epoch_spectra')));
      expect(await nightSpectra(db, older, NIGHT_RECORDING, 'C3')).toBeNull();
    }
  });
});
