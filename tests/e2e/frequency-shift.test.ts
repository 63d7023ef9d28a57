// End to end in Debian's chromium: the band check view on a cohort with a planted spindle-frequency
// shift (tests/helpers/shift-cohort.ts: the scenario's rhythm-frequency effect moves the patients'
// fast spindles from 13.5 to 12.5 Hz, same amplitude, same aperiodic background). The view must
// call sigma 11–16 Hz band-specific and say it is a shift of the peak frequency; the peak centre
// row passes (adjusted p = min(1, 4p) ≤ 0.05, Bonferroni over the four deciding tests: common
// practice) and the group centres shown lie within 0.3 Hz of the planted ones. Fails on any
// console error. Screenshot: test-output/e2e/band-check-shift.png.
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { shiftCohortDatabase } from '../helpers/shift-cohort.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';

const OUTPUT = path.resolve('test-output/e2e');

describe('dashboard band check on a planted spindle-frequency shift', () => {
  let cohortDir: string;
  let appDir: string;
  let s: DashboardSession;

  beforeAll(async () => {
    const cohort = await shiftCohortDatabase();
    cohortDir = cohort.dir;
    appDir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-shift-'));
    await buildDashboard(path.join(appDir, 'app'));
    s = await openDashboard(path.join(appDir, 'app'), cohort.db);
    mkdirSync(OUTPUT, { recursive: true });
  }, 600_000);

  afterAll(async () => {
    await s?.close();
    for (const d of [appDir, cohortDir]) if (d) rmSync(d, { recursive: true, force: true });
  });

  it('sigma 11–16 Hz over C3, C4, P3, P4: band-specific, a shift of the peak frequency, the centre row passing', async () => {
    const { page } = s;
    await page.goto(
      `${s.server.url}#/band-check?design=groups&groupColumn=group&groups=control,patient&stage=N2&reference=recorded&permutations=1000&seed=1&channels=C3,C4,P3,P4&band=sigma:11-16`,
    );
    await page.getByTestId('band-check-form').waitFor({ timeout: 60_000 });
    await expect.poll(() => page.getByTestId('run-band-check').isEnabled(), { timeout: 60_000 }).toBe(true);
    await page.getByTestId('run-band-check').click();
    await page.getByTestId('band-check-result').waitFor({ timeout: 120_000 });
    expect(await page.getByTestId('verdict-word').innerText()).toBe('band-specific');
    expect(await page.getByTestId('verdict-kind').innerText()).toMatch(/shift of the peak frequency/);
    expect(await page.getByTestId('verdict-sentence').innerText()).toMatch(/the sigma peak is (0\.[7-9]|1\.[0-3]) Hz lower in patient than in control/);
    const rows = await page
      .getByTestId('effects-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((t) => Array.from(t.querySelectorAll('td'), (d) => d.textContent?.trim() ?? '')));
    const centre = rows.find((x) => x[0] === 'peak centre frequency')!;
    expect(centre[7]).toBe('yes');
    expect(Number(centre[6])).toBeCloseTo(Math.min(1, 4 * Number(centre[5])), 3);
    expect(Number(centre[6])).toBeLessThanOrEqual(0.05);
    const means = Object.fromEntries(
      [...(await page.getByTestId('peak-centre').innerText()).matchAll(/(\d+\.\d\d) Hz in (control|patient)/g)].map((m) => [m[2], Number(m[1])]),
    );
    expect(Math.abs(means.control - 13.5)).toBeLessThan(0.3);
    expect(Math.abs(means.patient - 12.5)).toBeLessThan(0.3);
    await page.screenshot({ path: path.join(OUTPUT, 'band-check-shift.png'), fullPage: true });
  });

  it('logged no console error and sent nothing off the machine', () => {
    expect(s.foreignRequests).toEqual([]);
    expect(s.consoleErrors).toEqual([]);
  });
});
