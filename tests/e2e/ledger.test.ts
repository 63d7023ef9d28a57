// End to end in Debian's chromium on a copy of the demo database (tests/helpers/demo-db.ts) served
// with its ledger, as `bandwise dashboard` serves it: a contrast run in the dashboard, the page
// reloaded (which runs the contrast in the address again), then the saved contrast JSON run by
// `bandwise compare` twice: the ledger beside the database holds every run, and its count of
// distinct analyses stays 1 (src/core/report/ledger.ts).
import { execFileSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readLedger } from '../../src/analysis/ledger.ts';
import { ledgerCountsOf } from '../../src/analysis/report-facts.ts';
import { demoDatabase } from '../helpers/demo-db.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';

const cli = [path.resolve('bin/run-ts.mjs'), path.resolve('src/cli/main.ts')];
const CONTRAST =
  'design=groups&groupColumn=group&groups=control,patient&stage=N2&reference=recorded&channels=all&fminHz=4&fmaxHz=16&measure=log-psd&correction=cluster-mass&permutations=100&seed=4';

describe('the ledger counts distinct analyses across reloads and the command line', () => {
  let dir: string;
  let db: string;
  let ledger: string;
  let s: DashboardSession;

  beforeAll(async () => {
    const demo = await demoDatabase();
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-ledger-'));
    db = path.join(dir, 'cohort.duckdb');
    copyFileSync(demo, db);
    ledger = `${db}.ledger.jsonl`;
    await buildDashboard(path.join(dir, 'app'));
    s = await openDashboard(path.join(dir, 'app'), db, { ledgerPath: ledger });
  }, 1_800_000);

  afterAll(async () => {
    await s?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  it('a reload and two command-line runs of the same contrast leave one analysis', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/contrast?${CONTRAST}`);
    await page.getByTestId('run-contrast').click();
    await page.getByTestId('contrast-result').waitFor({ timeout: 180_000 });
    await expect.poll(() => readLedger(ledger).length, { timeout: 30_000 }).toBeGreaterThanOrEqual(1);
    const before = readLedger(ledger).length;
    expect(await page.getByTestId('ledger-count').innerText()).toContain('Distinct analyses run on this database: 1 (1 compare)');
    expect(await page.getByTestId('ledger-count').innerText()).toContain('ledger beside the database, shared with the command line');

    // the address now asks to run: a reload runs the contrast again
    await page.reload();
    await page.getByTestId('contrast-result').waitFor({ timeout: 180_000 });
    await expect.poll(() => readLedger(ledger).length, { timeout: 30_000 }).toBeGreaterThan(before);
    expect(await page.getByTestId('ledger-count').innerText()).toContain('Distinct analyses run on this database: 1 (1 compare)');

    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByTestId('save-contrast').click()]);
    const saved = path.join(dir, 'contrast.json');
    copyFileSync(await dl.path(), saved);
    for (const out of ['r1.json', 'r2.json'])
      execFileSync(process.execPath, [...cli, 'compare', db, '--contrast', saved, '--out', path.join(dir, out), '--quiet']);
    const lines = readLedger(ledger);
    // every run is a line (the browser's before and after the reload, the command's two) …
    expect(lines.length).toBeGreaterThanOrEqual(4);
    // … of one analysis: the browser and the command line name it alike
    expect(new Set(lines.map((e) => e.key)).size).toBe(1);
    expect(ledgerCountsOf(ledger, db)).toMatchObject({ analyses: 1, byKind: { compare: 1 }, repeats: lines.length - 1 });
    const r = JSON.parse(readFileSync(path.join(dir, 'r1.json'), 'utf8')) as { n: Record<string, number> };
    expect(await page.getByTestId('contrast-n').innerText()).toContain(`control ${r.n.control}, patient ${r.n.patient}`);
  }, 900_000);
});
