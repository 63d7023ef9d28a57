// End to end in Debian's chromium on the served demo database (tests/helpers/demo-db.ts): a
// contrast run in the dashboard with exclusions from its quality screen, opened by another
// browser (a fresh profile, empty browser storage) and run by `bandwise compare --contrast` on the
// saved JSON, gives the same n and the same clusters; paired and covariate results say their
// design and direction (docs/design.md: paired differences are second minus first; a covariate
// design shows the correlation as t). Group sizes from demo-cohort/participants.tsv.
// Screenshots: test-output/e2e/{contrast-paired,contrast-covariate}.png.
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoDatabase } from '../helpers/demo-db.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';

const OUTPUT = path.resolve('test-output/e2e');
// the command from its sources (bin/run-ts.mjs runs src/cli/main.ts through tsx)
const cli = [path.resolve('bin/run-ts.mjs'), path.resolve('src/cli/main.ts')];
const BASE =
  'design=groups&groupColumn=group&groups=control,patient&stage=N2&reference=recorded&channels=all&fminHz=1&fmaxHz=30&measure=log-psd&correction=cluster-mass&permutations=200&seed=2';

describe('a contrast with exclusions travels; paired and covariate labels', () => {
  let dir: string;
  let demo: string;
  let a: DashboardSession;
  const participants = readFileSync(path.resolve('demo-cohort/participants.tsv'), 'utf8')
    .trim()
    .split('\n')
    .slice(1)
    .map((l) => l.split('\t'));

  beforeAll(async () => {
    demo = await demoDatabase();
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-sharing-'));
    await buildDashboard(path.join(dir, 'app'));
    a = await openDashboard(path.join(dir, 'app'), demo);
    mkdirSync(OUTPUT, { recursive: true });
  });

  afterAll(async () => {
    await a?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  async function readResult(page: Page): Promise<{ n: string; clusters: string[][] }> {
    await page.getByTestId('contrast-result').waitFor({ timeout: 180_000 });
    await page.getByTestId('cluster-table').locator('tbody tr').first().waitFor();
    const n = await page.getByTestId('contrast-n').innerText();
    const clusters = await page
      .getByTestId('cluster-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((r) => Array.from(r.querySelectorAll('td'), (td) => td.textContent?.trim() ?? '')));
    return { n, clusters };
  }

  it('another browser opening the address, and bandwise compare on the saved JSON, give the same n and clusters', async () => {
    const { page } = a;
    const [first, second] = participants.filter((p) => p[1] === 'patient').map((p) => p[0]);
    // exclude one patient whole and one channel of another in the quality screen
    await page.goto(`${a.server.url}#/quality?subject=${first}&channel=Cz`);
    await page.getByTestId('exclusion-reason').fill('movement all night');
    await page.getByTestId('exclude-subject').click();
    await page.goto(`${a.server.url}#/quality?subject=${second}&channel=O1`);
    await page.getByTestId('exclusion-reason').fill('loose electrode');
    await page.getByTestId('exclude-channel').click();
    await page.goto(`${a.server.url}#/contrast?${BASE}`);
    await page.getByTestId('run-contrast').click();
    const mine = await readResult(page);
    const patients = participants.filter((p) => p[1] === 'patient').length;
    // the channel exclusion keeps its subject: one patient fewer, not two
    expect(mine.n).toContain(`patient ${patients - 1}`);
    expect(await page.getByTestId('contrast-headless').innerText()).toContain('Exclusions applied: 2');
    const link = page.url();
    // the address's query after '#/contrast?' (application/x-www-form-urlencoded: a space is '+')
    expect(new URLSearchParams(new URL(link).hash.split('?')[1]).get('exclusions')).toContain('"reason":"movement all night"');
    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByTestId('save-contrast').click()]);
    const saved = path.join(dir, 'contrast.json');
    execFileSync('cp', [await dl.path(), saved]);
    expect(JSON.parse(readFileSync(saved, 'utf8')).exclusions).toEqual([
      { subject: first, reason: 'movement all night' },
      { subject: second, channel: 'O1', reason: 'loose electrode' },
    ]);

    // another browser: a fresh profile, nothing in its storage
    const b = await openDashboard(path.join(dir, 'app'), demo);
    try {
      // the same address on the other browser's server: its token first (the page's address no
      // longer carries a's token, which the first load exchanged for a cookie), then the shared part
      await b.page.goto(b.server.url);
      await b.page.goto(`${new URL(b.server.url).origin}/${new URL(link).hash}`);
      const theirs = await readResult(b.page);
      const sizes = (t: string) => t.replace(/ · [\d.]+ s$/, '');
      expect(sizes(theirs.n)).toBe(sizes(mine.n));
      expect(theirs.clusters).toEqual(mine.clusters);
    } finally {
      await b.close();
    }

    // the command line on the saved JSON
    const out = path.join(dir, 'result.json');
    execFileSync(process.execPath, [...cli, 'compare', demo, '--contrast', saved, '--out', out, '--no-ledger', '--quiet']);
    const r = JSON.parse(readFileSync(out, 'utf8')) as { n: Record<string, number>; clusters: { p: number; fminHz: number; fmaxHz: number }[] };
    expect(mine.n).toContain(`control ${r.n.control}, patient ${r.n.patient}`);
    // columns: cluster, sign, direction, from, to, channels, mass, points, p, significant
    expect(mine.clusters.map((c) => [Number(c[3]), Number(c[4]), Number(c[8])])).toEqual(r.clusters.map((k) => [k.fminHz, k.fmaxHz, Number(k.p.toFixed(4))]));
  }, 900_000);

  it('a paired N2 → N3 contrast is titled and scaled "N3 − N2"; a covariate one "correlation with age, shown as t"', async () => {
    const { page } = a;
    await page.goto(
      `${a.server.url}#/contrast?design=paired&stages=N2,N3&stage=N2&reference=recorded&channels=all&fminHz=1&fmaxHz=20&measure=log-psd&correction=cluster-mass&permutations=100&seed=1`,
    );
    await page.getByTestId('run-contrast').click();
    // the page is the same: wait for this result's figure, not the last one
    await expect.poll(async () => (await page.getByTestId('statistic-map').textContent()) ?? '', { timeout: 180_000 }).toContain('N3 − N2, paired');
    const paired = await page.getByTestId('statistic-map').textContent();
    expect(paired).toContain('paired t, N3 − N2');
    expect(paired).not.toMatch(/patient|control/);
    await page.screenshot({ path: path.join(OUTPUT, 'contrast-paired.png'), fullPage: true });
    await page.goto(
      `${a.server.url}#/contrast?design=covariate&covariate=age&stage=N2&reference=recorded&channels=all&fminHz=1&fmaxHz=20&measure=log-psd&correction=cluster-mass&permutations=100&seed=1`,
    );
    await page.getByTestId('run-contrast').click();
    await expect.poll(async () => (await page.getByTestId('statistic-map').textContent()) ?? '', { timeout: 180_000 }).toContain('N2, correlation with age');
    const covariate = await page.getByTestId('statistic-map').textContent();
    expect(covariate).toContain('correlation with age, shown as t (from Pearson r)');
    expect(covariate).not.toMatch(/patient|control/);
    await page.screenshot({ path: path.join(OUTPUT, 'contrast-covariate.png'), fullPage: true });
  }, 600_000);
});
