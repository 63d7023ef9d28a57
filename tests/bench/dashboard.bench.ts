// Dashboard speed in headless chromium on the demo database (tests/helpers/demo-db.ts), through
// the e2e harness: (1) page load → first spectra plot drawn (target < 3 s), timed from navigation
// start in the page; (2) click → result of a 1000-permutation two-group cluster-mass contrast over
// all channels × 0.5–30 Hz of N2 log10 PSD (target < 2 s), first run (spectra read from the served
// file) and a second run (rows cached in the tab), timed in the page from the click.
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { buildDashboard, openDashboard } from '../e2e/harness.ts';
import { demoDatabase } from '../helpers/demo-db.ts';

const CONTRAST =
  '#/contrast?design=groups&groupColumn=group&groups=control,patient&stage=N2&reference=recorded&channels=all&fminHz=0.5&fmaxHz=30&measure=log-psd&correction=cluster-mass&permutations=1000&seed=1';

export async function run(): Promise<Record<string, unknown>> {
  const db = await demoDatabase();
  const dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-bench-dash-'));
  try {
    await buildDashboard(path.join(dir, 'app'));
    const s = await openDashboard(path.join(dir, 'app'), db);
    try {
      const { page } = s;
      await page.goto(`${s.server.url}#/spectra`);
      await page.getByTestId('spectra-figure').locator('svg').first().waitFor({ timeout: 60_000 });
      const firstPlotMs = await page.evaluate(() => performance.now());
      // where the time before the first plot went: the app's marks and the wasm download
      const loadMarks = await page.evaluate(() => ({
        ...Object.fromEntries(
          performance
            .getEntriesByType('mark')
            .filter((m) => m.name.startsWith('bandwise:'))
            .map((m) => [m.name.slice(9), Math.round(m.startTime)]),
        ),
        ...Object.fromEntries(
          (performance.getEntriesByType('resource') as PerformanceResourceTiming[])
            .filter((r) => r.name.endsWith('.wasm'))
            .map((r) => [`wasm ${r.name.split('/').pop()} fetched`, Math.round(r.responseEnd)]),
        ),
      }));
      await page.goto(`${s.server.url}${CONTRAST}`);
      await page.getByTestId('run-contrast').waitFor();
      const clickToResult = async (): Promise<number> => {
        const t0 = await page.evaluate(() => performance.now());
        await page.getByTestId('run-contrast').click();
        await page.waitForFunction(
          () => performance.getEntriesByName('bandwise:contrast-result').length > 0 && document.querySelector('[data-testid=statistic-map] svg') !== null,
          null,
          { timeout: 60_000 },
        );
        const t1 = await page.evaluate(() => performance.getEntriesByName('bandwise:contrast-result').at(-1)!.startTime);
        await page.evaluate(() => performance.clearMarks('bandwise:contrast-result'));
        await page.getByTestId('run-contrast').isEnabled();
        return t1 - t0;
      };
      const firstRunMs = await clickToResult();
      await page.waitForFunction(() => !(document.querySelector('[data-testid=run-contrast]') as HTMLButtonElement).disabled);
      const cachedRunMs = await clickToResult();
      const n = await page.getByTestId('contrast-n').innerText();
      if (s.consoleErrors.length > 0) throw new Error(`console errors: ${s.consoleErrors.join('; ')}`);
      return {
        database: path.basename(db),
        pageLoadToFirstSpectraPlotMs: Math.round(firstPlotMs),
        pageLoadTargetMs: 3000,
        pageLoadMarksMs: loadMarks,
        loadAverage1m: Math.round(os.loadavg()[0] * 100) / 100,
        contrastClickToResultMs: Math.round(firstRunMs),
        contrastClickToResultCachedMs: Math.round(cachedRunMs),
        contrastTargetMs: 2000,
        contrast: n.split(' · ')[0],
      };
    } finally {
      await s.close();
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
