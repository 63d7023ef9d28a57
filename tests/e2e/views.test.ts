// End to end in Debian's chromium on the served DEMO database (tests/helpers/demo-db.ts: the demo
// cohort of demo-cohort/scenario.json generated and ingested by the project's own pipeline, cached
// under tests/.tmp/ by the scenario's stamp).
// Expected values come from outside the dashboard: group sizes from demo-cohort/participants.tsv,
// the planted artifacts and the planted fast-spindle channels from the generator's truth.json
// (channels where the controls' N2 fast-spindle peak stands ≥ 0.7 log10 above the aperiodic part),
// the sigma range 12–16 Hz from src/core/spectrum/bands.ts (common practice). Fails on any console
// error. Screenshots of each view: test-output/e2e/{quality,quality-cell,spectra,spectra-residual,contrast}.png.
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { DEFAULT_BANDS } from '../../src/core/spectrum/bands.ts';
import { demoDatabase, demoTruthPath } from '../helpers/demo-db.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';

const OUTPUT = path.resolve('test-output/e2e');
const SIGMA = DEFAULT_BANDS.find((b) => b.name === 'sigma')!;

interface Truth {
  subjects: {
    subject: string;
    group: string;
    peaks: Record<string, Record<string, { rhythm: string; heightLog10: number }[]>>;
    artifacts: { kind: string; channel?: string }[];
  }[];
}

/**
 * The planted two-group N2 contrast: groups from the participants' group column, all channels,
 * 1–30 Hz, cluster mass, 1000 permutations, on the residual spectrum (log10 PSD minus the aperiodic
 * fit). On log10 PSD the planted +0.15 broadband offset fills one positive cluster over every
 * channel and frequency and the spindle reduction stays at cluster p ≈ 0.11 (measured) — the
 * scenario's point; the residual takes the offset out.
 */
const PLANTED =
  '#/contrast?design=groups&groupColumn=group&groups=control,patient&stage=N2&reference=recorded&channels=all&fminHz=1&fmaxHz=30&measure=residual&correction=cluster-mass&permutations=1000&seed=1';

describe('dashboard in chromium on the demo database: quality, spectra, contrast', () => {
  let dir: string;
  let demoPath: string;
  let truth: Truth;
  let s: DashboardSession;
  const participants = readFileSync(path.resolve('demo-cohort/participants.tsv'), 'utf8')
    .trim()
    .split('\n')
    .slice(1)
    .map((l) => l.split('\t'));

  beforeAll(async () => {
    demoPath = await demoDatabase();
    truth = JSON.parse(readFileSync(demoTruthPath(), 'utf8')) as Truth;
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-views-'));
    await buildDashboard(path.join(dir, 'app'));
    s = await openDashboard(path.join(dir, 'app'), demoPath);
    mkdirSync(OUTPUT, { recursive: true });
  });

  afterAll(async () => {
    await s?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  it('cohort view: group sizes from the participants table', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/cohort`);
    await page.getByTestId('group-sizes').locator('tbody tr').first().waitFor({ timeout: 60_000 });
    const cells = await page
      .getByTestId('group-sizes')
      .locator('tbody tr')
      .evaluateAll((rows) => rows.map((r) => Array.from(r.querySelectorAll('td'), (td) => td.textContent?.trim())));
    // demoDatabase() fails loudly when a recording fails to ingest, so every participant has one recording
    const expected = ['control', 'patient'].map((g) => {
      const members = String(participants.filter((p) => p[1] === g).length);
      return [g, members, members, members];
    });
    expect(cells).toEqual(expected);
  });

  it('quality screen: flags the three planted problem subjects with the right reasons', async () => {
    const { page } = s;
    await page.getByRole('link', { name: 'Quality screen' }).click();
    await page.getByTestId('quality-grid').locator('svg').first().waitFor({ timeout: 60_000 });
    const flags = page.getByTestId('quality-flags');
    await flags
      .getByRole('button', { name: 'Show all' })
      .click()
      .catch(() => undefined);
    const rows = await flags
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((r) => Array.from(r.querySelectorAll('td'), (td) => td.textContent?.trim() ?? '')));
    const flagged = (subject: string, metric: string) => rows.filter((r) => r[0] === subject && r[3] === metric);
    const planted = truth.subjects.filter((t) => t.artifacts.length > 0);
    expect(planted.map((t) => t.artifacts[0].kind).sort()).toEqual(['flat', 'mains', 'movement']);
    for (const t of planted) {
      const kind = t.artifacts[0].kind;
      if (kind === 'mains') {
        // every channel carries the hum: the mains metric is flagged on each, naming 50 Hz
        const hum = flagged(t.subject, 'mains-hum');
        expect(new Set(hum.map((r) => r[1])).size).toBeGreaterThanOrEqual(10);
        expect(hum.every((r) => r[6].includes('50 Hz'))).toBe(true);
      } else if (kind === 'flat') {
        const flat = flagged(t.subject, 'flat-channel');
        expect(flat.map((r) => r[1])).toContain(t.artifacts[0].channel);
      } else {
        // movement bursts: epochs rejected by amplitude on (nearly) every channel
        const rejected = flagged(t.subject, 'rejected-fraction');
        expect(new Set(rejected.map((r) => r[1])).size).toBeGreaterThanOrEqual(10);
        expect(rejected.some((r) => r[6].includes('amplitude'))).toBe(true);
      }
    }
    // no other subject is flagged for mains hum or a flat channel
    const others = rows.filter((r) => (r[3] === 'mains-hum' || r[3] === 'flat-channel') && !planted.some((t) => t.subject === r[0]));
    expect(others).toEqual([]);
    await page.screenshot({ path: path.join(OUTPUT, 'quality.png'), fullPage: true });
  });

  it('quality screen: a cell shows its spectrum against the cohort, rejections, night and hypnogram', async () => {
    const { page } = s;
    const hummed = truth.subjects.find((t) => t.artifacts[0]?.kind === 'mains')!.subject;
    await page.locator(`[data-testid=quality-grid] rect[data-cell="${hummed}|Cz"]`).click();
    await page.getByTestId('cell-spectrum').locator('svg').first().waitFor({ timeout: 30_000 });
    // the detail opens in view (issue 23): its top lies inside the window
    expect(
      await page.getByTestId('cell-detail').evaluate((el) => el.getBoundingClientRect().top >= 0 && el.getBoundingClientRect().top < window.innerHeight),
    ).toBe(true);
    expect(new URL(page.url()).hash).toContain(`subject=${hummed}`);
    expect(await page.getByTestId('cell-reasons').innerText()).toContain('50 Hz');
    await page.getByTestId('cell-band-power').locator('svg').first().waitFor();
    await page.getByTestId('cell-hypnogram').locator('svg').first().waitFor();
    expect(await page.getByTestId('rejected-fraction').innerText()).toMatch(/\d+\.\d %/);
    await page.screenshot({ path: path.join(OUTPUT, 'quality-cell.png'), fullPage: true });
  });

  it('spectra view: group spectra with confidence bands, measure and axis switches, scalp maps', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/spectra`);
    await page.getByTestId('spectra-figure').locator('svg').first().waitFor({ timeout: 60_000 });
    const legend = await page.getByTestId('spectra-figure').innerText();
    expect(legend).toMatch(/control \(n = \d+\)/);
    await page.getByTestId('scalp-difference').locator('svg').first().waitFor();
    await page.screenshot({ path: path.join(OUTPUT, 'spectra.png'), fullPage: true });
    await page.getByTestId('spectra-measure').selectOption('residual');
    await page.getByTestId('spectra-axes').selectOption('loglog');
    await expect.poll(() => page.getByTestId('spectra-figure').innerText()).toContain('residual');
    expect(new URL(page.url()).hash).toContain('measure=residual');
    await page.screenshot({ path: path.join(OUTPUT, 'spectra-residual.png'), fullPage: true });
  });

  let clusterText = '';
  let resultLink = '';

  async function runAndRead(): Promise<{ n: string; clusters: string[][] }> {
    const { page } = s;
    await page.getByTestId('run-contrast').click();
    await page.getByTestId('contrast-result').waitFor({ timeout: 120_000 });
    await expect.poll(() => page.getByTestId('run-contrast').isEnabled()).toBe(true);
    const n = await page.getByTestId('contrast-n').innerText();
    const clusters = await page
      .getByTestId('cluster-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((r) => Array.from(r.querySelectorAll('td'), (td) => td.textContent?.trim() ?? '')));
    return { n, clusters };
  }

  it('contrast: the two-group N2 contrast finds the planted fast-spindle cluster', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}${PLANTED}`);
    await page.getByTestId('contrast-form').waitFor();
    const before = await page.getByTestId('ledger-count').innerText();
    const { n, clusters } = await runAndRead();
    // subjects with a missing (or flagged) spectrum in any channel are left out by the assembly and listed
    const leftOut = await page.getByTestId('left-out').locator('tbody tr td:first-child').allInnerTexts();
    const size = (g: string) => participants.filter((p) => p[1] === g && !leftOut.includes(p[0])).length;
    expect(n).toContain(`control ${size('control')}, patient ${size('patient')}`);
    const flat = truth.subjects.find((t) => t.artifacts[0]?.kind === 'flat')!;
    // the flat channel has no clean epoch, hence no spectrum: that subject cannot take part
    expect(leftOut).toEqual([flat.subject]);
    const planted = ['F3', 'F4', 'Fz', 'C3', 'C4', 'Cz', 'P3', 'P4', 'Pz', 'O1', 'O2'].filter((ch) => {
      const h = truth.subjects.filter((t) => t.group === 'control').map((t) => t.peaks.N2[ch].find((p) => p.rhythm === 'fast-spindle')?.heightLog10 ?? 0);
      return h.reduce((a, b) => a + b, 0) / h.length >= 0.7;
    });
    expect(planted.sort()).toEqual(['C3', 'C4', 'Cz', 'P3', 'P4', 'Pz']);
    // columns: cluster, sign, direction, from, to, channels, mass, points, p, significant
    const spindle = clusters.find((r) => r[1] === '-1' && Number(r[8]) < 0.05 && Number(r[3]) <= 13.5 && Number(r[4]) >= 13.5);
    expect(spindle, JSON.stringify(clusters)).toBeDefined();
    expect(spindle![2]).toBe('patient < control');
    expect(Number(spindle![3])).toBeGreaterThanOrEqual(SIGMA.loHz - 1);
    expect(Number(spindle![4])).toBeLessThanOrEqual(SIGMA.hiHz + 1);
    const chans = spindle![5].split(' ');
    for (const ch of planted) expect(chans).toContain(ch);
    await page.getByTestId('statistic-map').locator('svg').first().waitFor();
    await page.getByTestId('cluster-map-1').locator('svg').first().waitFor();
    await page.getByTestId('contrast-spectra').locator('svg').first().waitFor();
    const after = await page.getByTestId('ledger-count').innerText();
    const count = (t: string) => Number(/run on this database: (\d+)/.exec(t)![1]);
    expect(count(after)).toBe(count(before) + 1);
    clusterText = JSON.stringify(clusters);
    resultLink = page.url();
    expect(new URL(resultLink).hash).toContain('run=1');
    await page.screenshot({ path: path.join(OUTPUT, 'contrast.png'), fullPage: true });
  });

  it('contrast: saves the JSON that bandwise compare reads', async () => {
    const { page } = s;
    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByTestId('save-contrast').click()]);
    const saved = parseContrast(JSON.parse(readFileSync(await dl.path(), 'utf8')));
    expect(saved).toMatchObject({
      design: 'groups',
      groupColumn: 'group',
      groups: ['control', 'patient'],
      stage: 'N2',
      measure: 'residual',
      fminHz: 1,
      fmaxHz: 30,
      correction: 'cluster-mass',
      permutations: 1000,
      seed: 1,
    });
  });

  it('contrast: a saved link reopens the same result', async () => {
    const page = await s.context.newPage();
    page.on('console', (m) => {
      if (m.type() === 'error') s.consoleErrors.push(m.text());
    });
    await page.goto(resultLink);
    await page.getByTestId('contrast-result').waitFor({ timeout: 120_000 });
    await page.getByTestId('cluster-table').locator('tbody tr').first().waitFor();
    const clusters = await page
      .getByTestId('cluster-table')
      .locator('tbody tr')
      .evaluateAll((trs) => trs.map((r) => Array.from(r.querySelectorAll('td'), (td) => td.textContent?.trim() ?? '')));
    expect(JSON.stringify(clusters)).toBe(clusterText);
    await page.close();
  });

  it('excluding a subject in the quality screen changes the contrast n', async () => {
    const { page } = s;
    const hummed = truth.subjects.find((t) => t.artifacts[0]?.kind === 'mains')!.subject;
    await page.goto(`${s.server.url}#/quality?subject=${hummed}&channel=Cz`);
    await page.getByTestId('exclusion-reason').fill('mains hum on every channel');
    await page.getByTestId('exclude-subject').click();
    await expect.poll(() => page.getByTestId('exclusions').innerText()).toContain(hummed);
    // the list survives a reload (browser storage for this database)
    await page.reload();
    await expect.poll(() => page.getByTestId('exclusions').innerText(), { timeout: 30_000 }).toContain('mains hum on every channel');
    const [tsv] = await Promise.all([page.waitForEvent('download'), page.getByTestId('exclusions').getByRole('button', { name: 'Export TSV' }).click()]);
    expect(readFileSync(await tsv.path(), 'utf8')).toBe(`subject\tchannel\treason\n${hummed}\tall\tmains hum on every channel\n`);
    await page.goto(`${s.server.url}${PLANTED}`);
    const { n } = await runAndRead();
    expect(n).toContain(`patient ${participants.filter((p) => p[1] === 'patient').length - 1}`);
    expect(await page.getByTestId('left-out').innerText()).toContain(hummed);
  });

  it('kept the research note visible and logged no console error', async () => {
    expect(await s.page.getByTestId('research-note').isVisible()).toBe(true);
    expect(s.foreignRequests).toEqual([]);
    expect(s.consoleErrors).toEqual([]);
  });
});
