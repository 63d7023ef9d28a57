// One ledger for the command line and the browser, counting distinct analyses: `bandwise compare`
// run twice with the same contrast on a small synthetic database (src/simulation/synthetic-store.ts:
// 20 recordings, 4 channels, N2; 50 permutations) is one analysis; with another exclusion it is
// another. The dashboard server appends the browser's lines to the same file (src/server/ledger-route.ts),
// and a browser line of the same contrast on the same data has the same identity.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { syntheticSpec } from '../../src/core/simulate/synthetic-database.ts';
import { analysisKey, ledgerEntry } from '../../src/core/report/ledger.ts';
import { writeSyntheticDatabase } from '../../src/simulation/synthetic-store.ts';
import { dataIdentityOf, readLedger } from '../../src/analysis/ledger.ts';
import { ledgerCountsOf } from '../../src/analysis/report-facts.ts';
import { startDashboardServer, LEDGER_URL_PATH, type DashboardServer } from '../../src/server/serve.ts';
import { contrastLedgerInput } from '../../src/dashboard/db/ledger-report.ts';
import type { CompareResult } from '../../src/core/contrast/run.ts';

const repo = path.resolve(import.meta.dirname, '../..');
const dir = mkdtempSync(path.join(tmpdir(), 'bw-ledger-cli-'));
const db = path.join(dir, 'cohort.duckdb');
const ledger = `${db}.ledger.jsonl`;
const cli = (args: string[]) =>
  spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), ...args], { encoding: 'utf8' });
const contrastFile = path.join(dir, 'contrast.json');
const base = { design: 'groups', groups: ['control', 'patient'], stage: 'N2', fminHz: 8, fmaxHz: 16, permutations: 50, seed: 3 };

function compare(out: string, extra: string[] = []): CompareResult & { database: { runId: string } } {
  const r = cli(['compare', db, '--contrast', contrastFile, '--out', path.join(dir, out), '--quiet', ...extra]);
  expect(r.status, r.stderr).toBe(0);
  return JSON.parse(readFileSync(path.join(dir, out), 'utf8'));
}

let server: DashboardServer | null = null;
beforeAll(async () => {
  await writeSyntheticDatabase(db, syntheticSpec({ recordings: 20, channelCount: 4, stages: ['N2'], seed: 4 }));
  writeFileSync(contrastFile, JSON.stringify(base));
});
afterAll(async () => {
  await server?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('one ledger of distinct analyses', () => {
  it('counts the same contrast run twice on the command line once, another exclusion as another analysis', () => {
    const first = compare('a.json');
    compare('b.json');
    const subject = first.subjects[0].subject;
    const excl = path.join(dir, 'excl.tsv');
    writeFileSync(excl, `subject\tchannel\treason\n${subject}\t\tnoisy\n`);
    compare('c.json', ['--exclusions', excl]);
    const lines = readLedger(ledger);
    expect(lines.map((e) => e.kind)).toEqual(['compare', 'compare', 'compare']);
    expect(lines[0].key).toBe(lines[1].key);
    expect(lines[2].key).not.toBe(lines[0].key);
    expect(ledgerCountsOf(ledger, db)).toMatchObject({ analyses: 2, byKind: { compare: 2 }, repeats: 1 });
  });

  it("takes the browser's lines through the dashboard server into the same file, with the same identity for the same analysis", async () => {
    const app = path.join(dir, 'app');
    mkdirSync(app, { recursive: true });
    writeFileSync(path.join(app, 'index.html'), '<!doctype html><title>t</title>');
    server = await startDashboardServer({ dbPath: db, appDir: app, ledgerPath: ledger });
    const token = new URL(server.url).searchParams.get('token')!;
    const url = `${new URL(server.url).origin}${LEDGER_URL_PATH}?token=${token}`;

    const got = await fetch(url);
    expect(got.status).toBe(200);
    expect((await got.text()).trim().split('\n')).toHaveLength(3);

    // the dashboard's line for the same contrast on the same data (db/ledger-report.ts + src/core/report/ledger.ts)
    const result = JSON.parse(readFileSync(path.join(dir, 'a.json'), 'utf8')) as CompareResult & { database: { runId: string } };
    const data = await dataIdentityOf(db, result.database.runId);
    const line = ledgerEntry(contrastLedgerInput(result, 0.5), 'picked-name.duckdb', data, new Date().toISOString());
    expect(line.key).toBe(readLedger(ledger)[0].key);
    expect(line.key).toBe(analysisKey('compare', result.contrast, null, data));
    const posted = await fetch(url, { method: 'POST', body: JSON.stringify(line) });
    expect(posted.status).toBe(200);
    // the server names the database as the command line does, whatever the browser sent
    expect(readLedger(ledger)[3].database).toBe('cohort.duckdb');
    expect(ledgerCountsOf(ledger, db)).toMatchObject({ analyses: 2, repeats: 2 });

    // only analyses are taken, one JSON object each
    expect((await fetch(url, { method: 'POST', body: JSON.stringify({ ...line, kind: 'report' }) })).status).toBe(400);
    expect((await fetch(url, { method: 'POST', body: 'not json' })).status).toBe(400);
    expect((await fetch(url, { method: 'DELETE' })).status).toBe(405);
    expect(readLedger(ledger)).toHaveLength(4);
    // without the token nothing is read or written
    expect((await fetch(`${new URL(server.url).origin}${LEDGER_URL_PATH}`, { method: 'POST', body: JSON.stringify(line) })).status).toBe(403);
    expect(readLedger(ledger)).toHaveLength(4);
  });
});
