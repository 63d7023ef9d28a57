// End to end in Debian's chromium on the served demo database (tests/helpers/demo-db.ts): the band
// check, robustness and methods report views. Expected verdicts come from what the generator
// planted (demo-cohort/scenario.json): a broadband aperiodic offset increase in patients, which
// theta 4–8 Hz in N2 (all channels averaged) must call 'broadband-offset', and a fast-spindle
// reduction over C3, C4, Cz, P3, P4, Pz, which sigma 12–16 Hz (band edges: common practice,
// src/core/spectrum/bands.ts) must call 'band-specific'. The number of robustness paths is the
// product of the choices the demo stores (2 references × 2 averagings × 1 fit range, counted
// directly in the database file with node's DuckDB). Fails on any console error. Screenshots:
// test-output/e2e/{band-check-theta,band-check-sigma,robustness,report}.png.
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/index.ts';
import { demoDatabase } from '../helpers/demo-db.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';

const OUTPUT = path.resolve('test-output/e2e');
const BASE = 'design=groups&groupColumn=group&groups=control,patient&stage=N2&reference=recorded&permutations=1000&seed=1';
const CENTRO_PARIETAL = 'C3,C4,Cz,P3,P4,Pz';

const EFFECT_NAMES = [
  'raw band power',
  'aperiodic offset',
  'aperiodic exponent',
  'periodic residual',
  'peak centre frequency',
  'peak width',
  'peak height',
  'aperiodic level in the band',
  'lower flank',
  'upper flank',
  'flank difference (upper − lower)',
  'relative band power',
];

const count = (t: string) => Number(/run on this database: (\d+)/.exec(t)![1]);

describe('dashboard in chromium on the demo database: band check, robustness, methods report', () => {
  let dir: string;
  let demoPath: string;
  let s: DashboardSession;
  let stored: { references: number; averagings: number; fits: number };

  beforeAll(async () => {
    demoPath = await demoDatabase();
    const store = await openStore(demoPath, { readOnly: true });
    try {
      const n = async (sql: string) => Number((await store.connection.runAndReadAll(sql)).getRowObjectsJS()[0].n);
      stored = {
        references: await n("SELECT count(DISTINCT reference) AS n FROM spectra WHERE stage = 'N2'"),
        averagings: await n("SELECT count(DISTINCT averaging) AS n FROM spectra WHERE stage = 'N2'"),
        fits: await n("SELECT count(*) AS n FROM (SELECT DISTINCT fit_lo_hz, fit_hi_hz FROM aperiodic WHERE stage = 'N2' AND method = 'fit')"),
      };
    } finally {
      await store.close();
    }
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-verdict-'));
    await buildDashboard(path.join(dir, 'app'));
    s = await openDashboard(path.join(dir, 'app'), demoPath);
    mkdirSync(OUTPUT, { recursive: true });
  });

  afterAll(async () => {
    await s?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  async function bandCheck(query: string): Promise<{ verdict: string; sentence: string; before: number; after: number }> {
    const { page } = s;
    await page.goto(`${s.server.url}#/band-check?${query}`);
    await page.getByTestId('band-check-form').waitFor({ timeout: 60_000 });
    await expect.poll(() => page.getByTestId('run-band-check').isEnabled(), { timeout: 60_000 }).toBe(true);
    const before = count(await page.getByTestId('ledger-count').innerText());
    await page.getByTestId('run-band-check').click();
    // a new result is in when the ledger has its entry (the view may still show the previous one until then)
    await expect.poll(async () => count(await page.getByTestId('ledger-count').innerText()), { timeout: 120_000 }).toBeGreaterThan(before);
    await page.getByTestId('band-check-result').waitFor();
    await page.getByTestId('band-check-figure').locator('svg').first().waitFor();
    const after = count(await page.getByTestId('ledger-count').innerText());
    return { verdict: await page.getByTestId('verdict-word').innerText(), sentence: await page.getByTestId('verdict-sentence').innerText(), before, after };
  }

  it('band check: theta 4–8 Hz in N2, all channels averaged, is a broadband offset shift; one ledger entry', async () => {
    const r = await bandCheck(`${BASE}&channels=all&band=theta:4-8`);
    expect(r.verdict).toBe('broadband-offset');
    expect(r.sentence).toMatch(/^Broadband offset shift: the aperiodic offset .* is higher in patient than in control/);
    expect(r.after).toBe(r.before + 1);
    const rows = await s.page
      .getByTestId('effects-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((t) => Array.from(t.querySelectorAll('td'), (d) => d.textContent?.trim() ?? '')));
    expect(rows.map((x) => x[0])).toEqual(EFFECT_NAMES);
    // Bonferroni over the four deciding tests (common practice): adjusted p = min(1, 4p), shown to 4 decimals
    const deciding = rows.filter((x) => x[7] === 'yes');
    expect(deciding.map((x) => x[0])).toEqual(['aperiodic offset', 'aperiodic exponent', 'periodic residual', 'peak centre frequency']);
    for (const x of deciding.filter((x) => x[5] !== '–')) expect(Number(x[6])).toBeCloseTo(Math.min(1, 4 * Number(x[5])), 3);
    // the scenario has no theta rhythm in N2: no fitted theta peaks, so the centre and width tests say why they did not run
    for (const name of ['peak centre frequency', 'peak width']) expect(rows.find((x) => x[0] === name)!.slice(5, 7)).toEqual(['–', '–']);
    expect(await s.page.getByTestId('peak-centre').innerText()).toMatch(/Peak centre not tested: too few subjects with a fitted peak in theta 4–8 Hz/);
    expect(await s.page.getByTestId('verdict-rule').innerText()).toContain('4 tests, Bonferroni-corrected at α = 0.05 (each passes at p ≤ 0.0125)');
    expect(await s.page.getByTestId('verdict-kind').count()).toBe(0);
    expect(new URL(s.page.url()).hash).toContain('band=theta%3A4-8');
    await s.page.screenshot({ path: path.join(OUTPUT, 'band-check-theta.png'), fullPage: true });
  });

  it('band check: sigma 12–16 Hz in N2 over C3, C4, Cz, P3, P4, Pz is band-specific', async () => {
    const r = await bandCheck(`${BASE}&channels=${CENTRO_PARIETAL}&band=sigma:12-16`);
    expect(r.verdict).toBe('band-specific');
    expect(r.sentence).toMatch(/^Band-specific: the periodic sigma power .* is lower in patient than in control/);
    expect(r.after).toBe(r.before + 1);
    // the scenario halves the spindles' amplitude and leaves their frequency: a power change, no shift
    expect(await s.page.getByTestId('verdict-kind').innerText()).toBe(
      "In the band's periodic part: a change of the periodic power (no shift of the peak frequency found).",
    );
    const rows = await s.page
      .getByTestId('effects-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((t) => Array.from(t.querySelectorAll('td'), (d) => d.textContent?.trim() ?? '')));
    expect(rows.map((x) => x[0])).toEqual(EFFECT_NAMES);
    const centre = rows.find((x) => x[0] === 'peak centre frequency')!;
    expect(Number(centre[6])).toBeCloseTo(Math.min(1, 4 * Number(centre[5])), 3);
    expect(Number(centre[6])).toBeGreaterThan(0.05); // not passing: adjusted p above α
    expect(Number(rows.find((x) => x[0] === 'peak width')![5])).toBeGreaterThan(0);
    // planted fast-spindle centre 13.5 Hz in both groups (SD 2.5 % between subjects): each group's mean within 0.3 Hz
    const means = [...(await s.page.getByTestId('peak-centre').innerText()).matchAll(/(\d+\.\d\d) Hz in (control|patient)/g)];
    expect(means.map((m) => m[2])).toEqual(['control', 'patient']);
    for (const m of means) expect(Math.abs(Number(m[1]) - 13.5)).toBeLessThan(0.3);
    expect(await s.page.getByTestId('band-check-n').innerText()).toContain('channels averaged: C3, C4, Cz, P3, P4, Pz');
    await s.page.screenshot({ path: path.join(OUTPUT, 'band-check-sigma.png'), fullPage: true });
  });

  it('methods report of the last band check: text, ledger counts, Markdown and parameters JSON', async () => {
    const { page } = s;
    await page.getByTestId('to-report').click();
    await page.getByTestId('methods-text').waitFor({ timeout: 60_000 });
    const text = await page.getByTestId('methods-text').innerText();
    expect(text).toContain('Methods: band check of sigma');
    expect(text).toContain("Welch's method (Welch 1967)");
    expect(text).toMatch(/In N2, \d+ of \d+ channel-epochs/);
    expect(text).toMatch(/The ledger of this database records \d+ distinct analyses \(\d+ band-check;/);
    const ledger = await page.getByTestId('report-ledger-count').innerText();
    expect(count(ledger)).toBe(2);
    const [md] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-markdown').click()]);
    const markdown = readFileSync(await md.path(), 'utf8');
    expect(markdown.startsWith('# Methods: band check of sigma\n')).toBe(true);
    expect(markdown).toContain('Verdict: **band-specific**');
    const [js] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-parameters').click()]);
    const params = JSON.parse(readFileSync(await js.path(), 'utf8'));
    expect(params).toMatchObject({ kind: 'band-check', band: { name: 'sigma', loHz: 12, hiHz: 16 }, ledger: { analyses: 2, byKind: { 'band-check': 2 } } });
    expect(params.contrast.channels).toEqual(CENTRO_PARIETAL.split(','));
    const [svg] = await Promise.all([page.waitForEvent('download'), page.getByTestId('report-figure-svg').click()]);
    expect(readFileSync(await svg.path(), 'utf8')).toMatch(/^<\?xml[^]*<svg/);
    await page.screenshot({ path: path.join(OUTPUT, 'report.png'), fullPage: true });
  });

  it('a contrast run raises the ledger count by one', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/contrast?${BASE}&channels=all&fminHz=1&fmaxHz=30&permutations=200`);
    await page.getByTestId('contrast-form').waitFor();
    const before = count(await page.getByTestId('ledger-count').innerText());
    await page.getByTestId('run-contrast').click();
    await page.getByTestId('contrast-result').waitFor({ timeout: 120_000 });
    await page.goto(`${s.server.url}#/report`);
    await expect.poll(async () => count(await page.getByTestId('report-ledger-count').innerText()), { timeout: 30_000 }).toBe(before + 1);
    expect(await page.getByTestId('report-ledger-count').innerText()).toMatch(/2 band-check, 1 compare/);
  });

  it('robustness: every combination of the stored choices runs and the share of significant paths is stated', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/robustness?${BASE}&channels=${CENTRO_PARIETAL}&band=sigma:12-16`);
    await page.getByTestId('robustness-form').waitFor({ timeout: 60_000 });
    // absolute × 2 summaries + relative × 2 denominators + residual × stored fit ranges, × references × averagings × 3 band edges
    // × 2 band definitions (fixed and individual: the demo stores fits, hence peaks)
    const expected = (2 + 2 + stored.fits) * stored.references * stored.averagings * 3 * 2;
    await expect.poll(() => page.getByTestId('rb-path-count').innerText(), { timeout: 60_000 }).toContain(`${expected} paths × 1000 permutations`);
    if (stored.fits === 1) expect(await page.getByTestId('rb-one-fit').innerText()).toContain('only one fit range is stored');
    await page.getByTestId('run-robustness').click();
    await page.getByTestId('robustness-result').waitFor({ timeout: 120_000 });
    const share = await page.getByTestId('robustness-share').innerText();
    const m = /^(\d+) of (\d+) paths \((\d+) %\) have p < 0.05/.exec(share);
    expect(m, share).not.toBeNull();
    expect(Number(m![2])).toBe(expected);
    expect(Number(m![3])).toBe(Math.round((100 * Number(m![1])) / expected));
    // the planted spindle reduction is seen by most paths
    expect(Number(m![1])).toBeGreaterThan(expected / 2);
    await page.getByTestId('specification-curve').locator('svg').first().waitFor();
    expect(await page.getByTestId('paths-table').locator('tbody tr').count()).toBe(Math.min(expected, 60));
    await page.screenshot({ path: path.join(OUTPUT, 'robustness.png'), fullPage: true });
  });

  it('robustness decided on power and on power and the peak centre: each path twice, the centre test in the table', async () => {
    const { page } = s;
    await page.goto(
      `${s.server.url}#/robustness?${BASE}&channels=${CENTRO_PARIETAL}&band=sigma:12-16&measures=residual&edges=0&definitions=fixed&decisions=power,power-and-frequency`,
    );
    await page.getByTestId('robustness-form').waitFor({ timeout: 60_000 });
    // × 2 decisions (fixed band edges and definition)
    const expected = stored.fits * stored.references * stored.averagings * 2;
    await expect.poll(() => page.getByTestId('rb-path-count').innerText(), { timeout: 60_000 }).toContain(`${expected} paths × 1000 permutations`);
    expect(await page.getByTestId('rb-decision-power-and-frequency').isChecked()).toBe(true);
    await page.getByTestId('run-robustness').click();
    await page.getByTestId('robustness-decision').waitFor({ timeout: 120_000 });
    const rows = await page
      .getByTestId('paths-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((t) => Array.from(t.querySelectorAll('td'), (d) => d.textContent?.trim() ?? '')));
    expect(rows).toHaveLength(expected);
    // columns: rank, path, choices, effect, CI low, CI high, p, significant, n, decided on, centre effect, centre difference, centre p, without a peak
    const both = rows.filter((r) => r[9] === 'power and peak centre');
    expect(both).toHaveLength(expected / 2);
    for (const r of both) {
      expect(Number(r[12])).toBeGreaterThanOrEqual(0);
      // Bonferroni over the two tests of the path (common practice): p = min(1, 2 · min(p_power, p_centre))
      const twin = rows.find((x) => x[9] === 'power' && x[2] === r[2].replace('; decided on power and the peak centre (Bonferroni ×2)', ''))!;
      expect(Number(r[6])).toBeCloseTo(Math.min(1, 2 * Math.min(Number(twin[6]), Number(r[12]))), 3);
    }
  });

  it('logged no console error and sent nothing off the machine', () => {
    expect(s.foreignRequests).toEqual([]);
    expect(s.consoleErrors).toEqual([]);
  });
});
