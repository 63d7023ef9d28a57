// End to end in Debian's chromium on the served demo database (tests/helpers/demo-db.ts): the
// power and deviation views. The cohort view's subject link opens that subject's deviation map and
// the quality view links the selected subject's; the numbers shown must equal what
// src/core/planning computes from the same database read by node's DuckDB (the command line's
// reader) — for power the same seed gives the same simulations, however they are split over
// workers. Fails on any console error. Screenshots: test-output/e2e/{power,deviation}.png.
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readContrast } from '../../src/analysis/compare-runner.ts';
import { deviation, measureContrast, parseDeviationSpec, simulatePower } from '../../src/core/planning/index.ts';
import { powerFromParams } from '../../src/dashboard/views/power/power-params.ts';
import { demoDatabase } from '../helpers/demo-db.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';

const OUTPUT = path.resolve('test-output/e2e');
const POWER =
  'design=groups&groupColumn=group&groups=control,patient&stage=N2&reference=recorded&averaging=mean&measure=residual&fminHz=1&fmaxHz=30' +
  '&correction=cluster-mass&permutations=100&seed=4&referenceGroup=control&effect=-0.1&band=sigma:12-16&plantChannels=C3,C4,Cz,P3,P4,Pz&n=5,10&simulations=8&alpha=0.05';

describe('dashboard in chromium on the demo database: power and deviation', () => {
  let dir: string;
  let demoPath: string;
  let s: DashboardSession;

  async function readData(c: Parameters<typeof readContrast>[1]) {
    return (await readContrast(demoPath, c, [])).data;
  }

  beforeAll(async () => {
    demoPath = await demoDatabase();
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-planning-'));
    await buildDashboard(path.join(dir, 'app'));
    s = await openDashboard(path.join(dir, 'app'), demoPath);
    mkdirSync(OUTPUT, { recursive: true });
  });

  afterAll(async () => {
    await s?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  it("power: the curve of the address's settings, equal to the same simulations in node", async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/power?${POWER}`);
    await page.getByTestId('power-form').waitFor({ timeout: 60_000 });
    await expect.poll(() => page.getByTestId('run-power').isEnabled(), { timeout: 60_000 }).toBe(true);
    await page.getByTestId('run-power').click();
    await page.getByTestId('power-result').waitFor({ timeout: 120_000 });
    await page.getByTestId('power-figure').locator('svg').first().waitFor();
    const rows = await page
      .getByTestId('power-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((t) => Array.from(t.querySelectorAll('td'), (d) => d.textContent?.trim() ?? '')));
    const { contrast, plan } = powerFromParams(Object.fromEntries(new URLSearchParams(POWER)));
    const expected = simulatePower(contrast, plan, await readData(contrast)).curve;
    console.log(`power on the demo: ${rows.map((r) => `n ${r[0]}: ${r[1]} [${r[2]}, ${r[3]}]`).join('; ')}`);
    expect(rows.map((r) => [Number(r[0]), r[1], r[2], r[3], Number(r[4])])).toEqual(
      expected.map((p) => [p.nPerGroup, p.power.toFixed(3), p.ciLow.toFixed(3), p.ciHigh.toFixed(3), p.found]),
    );
    expect(await page.getByTestId('power-summary').innerText()).toContain('drawn from group = control (17 subjects)');
    expect(new URL(page.url()).hash).toContain('run=1');
    await page.screenshot({ path: path.join(OUTPUT, 'power.png'), fullPage: true });
    expect(s.consoleErrors).toEqual([]);
  });

  it("deviation: the cohort view's subject link opens its map; shares equal node's", async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/cohort`);
    const link = page.getByTestId('recordings').locator('tbody a', { hasText: 'pat04' });
    await link.waitFor({ timeout: 60_000 });
    await link.click();
    await page.getByTestId('deviation-result').waitFor({ timeout: 120_000 });
    await page.getByTestId('deviation-map').locator('svg').first().waitFor();
    await page.getByTestId('deviation-band').locator('svg').first().waitFor();
    const heading = await page.getByTestId('deviation-subject').innerText();
    const spec = parseDeviationSpec({ referenceGroup: 'control' });
    const r = deviation(spec, await readData(measureContrast(spec)));
    const pat04 = r.subjects.find((x) => x.subject === 'pat04')!;
    console.log(`deviation on the demo: ${heading}`);
    expect(heading).toBe(`pat04 (patient): ${(100 * pat04.share).toFixed(1)} % of points beyond |z| > 2, mean z ${pat04.meanZ.toFixed(2)}`);
    const groups = await page
      .getByTestId('deviation-groups')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((t) => Array.from(t.querySelectorAll('td'), (d) => d.textContent?.trim() ?? '')));
    expect(groups.map((g) => [g[0], Number(g[1]), g[2]])).toEqual(r.groups.map((g) => [g.group, g.n, g.shares.median.toFixed(3)]));
    // another channel's spectrum, then another subject from the table
    await page.getByTestId('deviation-channel').selectOption('Pz');
    expect(new URL(page.url()).hash).toContain('channel=Pz');
    await page.getByTestId('deviation-subjects').locator('tbody tr', { hasText: 'ctl03' }).click();
    await expect.poll(() => page.getByTestId('deviation-subject').innerText(), { timeout: 60_000 }).toMatch(/^ctl03 \(control, scored leave-one-out\)/);
    await page.screenshot({ path: path.join(OUTPUT, 'deviation.png'), fullPage: true });
    expect(s.consoleErrors).toEqual([]);
  });

  it('quality: the selected subject links to its deviation map', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/quality?subject=ctl05&channel=C3&stage=N2`);
    const link = page.getByTestId('quality-deviation-link');
    await link.waitFor({ timeout: 60_000 });
    await link.click();
    await page.getByTestId('deviation-result').waitFor({ timeout: 120_000 });
    await expect.poll(() => page.getByTestId('deviation-subject').innerText(), { timeout: 60_000 }).toMatch(/^ctl05 \(control/);
    expect(s.foreignRequests).toEqual([]);
    expect(s.consoleErrors).toEqual([]);
  });
});
