// Concurrent readers (issue 8): while the real `bandwise ingest` writes one database file, the
// dashboard server serves another, finished database and `bandwise compare` reads it, without
// errors; a reader pointed at the file being written gets an explained message, never DuckDB's
// raw lock error. Outside source: DuckDB's concurrency rule (documentation, "Concurrency": one
// process may open a database file for writing, and then no other process can open it; many
// processes may read it together when none writes) and RFC 9110 §14 for the range answers.
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_URL_PATH, startDashboardServer } from '../../src/server/serve.ts';
import { accessCookie } from '../helpers/dashboard-access.ts';
import { faultEdfBytes, STAGES_10 } from './fixture.ts';
import { cli, dumpAll, run } from './helpers.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'bw-readers-'));
const at = (f: string) => path.join(dir, f);
const LABELS = ['EEG C3', 'EEG C4', 'EEG M1', 'EEG M2'];
const EXPLAINED_READ =
  /is open for writing by another process \(PID \d+\), e\.g\. a bandwise ingest or merge still running\. A DuckDB database that one process writes cannot be read by any other until the writer has finished/;
const RAW = /Could not set lock|IO Error|Conflicting lock|\n\s+at /;

function cohort(name: string, n: number, seed: number, stages: string[]): string {
  const rows: string[] = [];
  for (let i = 0; i < n; i++) {
    writeFileSync(at(`${name}${i + 1}.edf`), faultEdfBytes({ labels: LABELS, seed: seed + i, stages }));
    rows.push(`${name}${i + 1}\t${i % 2 ? 'patient' : 'control'}\t${name}${i + 1}.edf`);
  }
  const table = at(`${name}.tsv`);
  writeFileSync(table, ['subject\tgroup\trecording', ...rows].join('\n') + '\n');
  return table;
}

let finished = '';
let writerTable = '';
beforeAll(async () => {
  // the finished database: 6 recordings, 3 per group, spectra only
  finished = at('finished.duckdb');
  // 3 N2 epochs per recording: --min-epochs 2 keeps their spectra unflagged, so compare uses them
  const r = await run(['ingest', cohort('f', 6, 80, STAGES_10), '--out', finished, '--jobs', '1', '--no-fit', '--min-epochs', '2']);
  expect(r.code, r.out).toBe(0);
  // the one being written: 8 recordings of 5 min with aperiodic fits (about 1 s each here), several seconds of writing
  writerTable = cohort('w', 8, 90, STAGES_10);
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('readers while an ingest writes another file', () => {
  it('the server and compare read the finished database; readers of the busy file get an explanation', async () => {
    // a stand-in app folder (the built app is served in privacy-readers.test.ts; one build at a time)
    const appDir = at('app');
    mkdirSync(appDir, { recursive: true });
    writeFileSync(path.join(appDir, 'index.html'), '<!doctype html><title>stand-in</title>\n');
    const before = await dumpAll(finished);
    const busy = at('busy.duckdb');
    const writer = cli(['ingest', writerTable, '--out', busy, '--jobs', '1']);
    // the writer holds the file once it exists (DuckDB takes its lock when it opens the file)
    while (!existsSync(busy)) await new Promise((r) => setTimeout(r, 20));
    await new Promise((r) => setTimeout(r, 300));

    const server = await startDashboardServer({ dbPath: finished, appDir });
    const fileBytes = readFileSync(finished);
    const serve = async () => {
      const base = new URL(DATABASE_URL_PATH, server.url);
      const cookie = accessCookie(server.url);
      const head = await fetch(base, { method: 'HEAD', headers: { Range: 'bytes=0-', ...cookie } });
      expect(head.status).toBe(206);
      expect(Number(head.headers.get('content-length'))).toBe(fileBytes.length);
      // the whole file in 64-KiB ranges, as duckdb-wasm reads it
      const parts: Buffer[] = [];
      for (let from = 0; from < fileBytes.length; from += 65536) {
        const to = Math.min(fileBytes.length, from + 65536) - 1;
        const res = await fetch(base, { headers: { Range: `bytes=${from}-${to}`, ...cookie } });
        expect(res.status).toBe(206);
        expect(res.headers.get('content-range')).toBe(`bytes ${from}-${to}/${fileBytes.length}`);
        parts.push(Buffer.from(await res.arrayBuffer()));
      }
      expect(Buffer.concat(parts).equals(fileBytes)).toBe(true);
      expect((await fetch(new URL('/', server.url), { headers: cookie })).status).toBe(200);
    };
    const args = ['--groups', 'control,patient', '--stage', 'N2', '--permutations', '100', '--no-ledger'];
    try {
      const [readFinished, readBusy, dashBusy] = await Promise.all([
        run(['compare', finished, ...args, '--out', at('finished.json')]),
        run(['compare', busy, ...args, '--out', at('busy.json')]),
        run(['dashboard', busy]),
        serve(),
      ]);
      // all of it happened while the writer was still writing (else this proves nothing)
      expect(writer.child.exitCode).toBeNull();
      expect(readFinished.code, readFinished.out).toBe(0);
      const result = JSON.parse(readFileSync(at('finished.json'), 'utf8')) as { n: Record<string, number> };
      expect(result.n).toEqual({ control: 3, patient: 3 });
      for (const [what, r] of [
        ['compare', readBusy],
        ['dashboard', dashBusy],
      ] as const) {
        expect(r.code, r.out).toBe(1);
        expect(r.out).toContain(`bandwise ${what}: ${busy} is open for writing`);
        expect(r.out).toMatch(EXPLAINED_READ);
        expect(r.out).not.toMatch(RAW);
      }
    } finally {
      await server.close();
    }
    const w = await writer.ended;
    expect(w.code, w.out).toBe(0);
    expect(w.out).toContain('8 done, 0 already stored (skipped), 0 failed');
    expect(await dumpAll(finished)).toEqual(before); // the readers changed nothing
  }, 120_000);

  it('an ingest into a file another process holds open gets an explanation too', async () => {
    // this test process holds the finished database open read-only (a shared lock), as a notebook would
    const reader = await DuckDBInstance.create(finished, { access_mode: 'READ_ONLY' });
    try {
      const r = await run(['ingest', writerTable, '--out', finished, '--jobs', '1', '--no-fit']);
      expect(r.code, r.out).toBe(1);
      expect(r.out).toMatch(
        /^bandwise ingest: .*finished\.duckdb is in use by another process \(PID \d+\): another bandwise ingest or merge writing it, or a reader/m,
      );
      expect(r.out).toMatch(/DuckDB lets only one process write a database, with no other process reading it meanwhile/);
      expect(r.out).not.toMatch(RAW);
    } finally {
      reader.closeSync();
    }
  }, 60_000);
});
