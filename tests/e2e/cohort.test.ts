// End to end in Debian's chromium: the built app, served by src/server on the fixture
// database, opens it with duckdb-wasm over HTTP range requests (RFC 9110 §14: every GET of the
// database must be a 206 partial response) and shows the cohort view. Expected group sizes come
// from the fixture's participant list. Fails on any console error and on any request that
// leaves 127.0.0.1. Writes test-output/e2e/cohort.png.
import { mkdirSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FIXTURE_PARTICIPANTS, makeFixtureDb } from '../fixtures/make-fixture-db.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';

const OUTPUT = path.resolve('test-output/e2e');

describe('dashboard in chromium: cohort view', () => {
  let dir: string;
  let dbPath: string;
  let s: DashboardSession;

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-'));
    dbPath = path.join(dir, 'fixture.duckdb');
    await makeFixtureDb(dbPath);
    await buildDashboard(path.join(dir, 'app'));
    s = await openDashboard(path.join(dir, 'app'), dbPath);
    mkdirSync(OUTPUT, { recursive: true });
  });

  afterAll(async () => {
    await s?.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('shows the right group sizes, read from the served database with range requests', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/cohort`);
    const sizes = page.getByTestId('group-sizes').locator('tbody tr');
    await sizes.first().waitFor({ timeout: 60_000 });
    const cells = await sizes.evaluateAll((rows) => rows.map((r) => Array.from(r.querySelectorAll('td'), (td) => td.textContent?.trim())));
    const expected = ['control', 'patient'].map((g) => {
      const members = FIXTURE_PARTICIPANTS.filter((p) => p.group === g);
      const ingested = String(members.filter((p) => p.ingested).length);
      return [g, String(members.length), ingested, ingested];
    });
    expect(cells).toEqual(expected);

    await expect.poll(() => page.getByTestId('recordings').locator('tbody tr').count()).toBe(FIXTURE_PARTICIPANTS.filter((p) => p.ingested).length);
    const arch = await page.getByTestId('sleep-architecture').locator('thead').innerText();
    for (const h of ['N2 (min)', 'Total sleep (min)', 'Sleep efficiency (%)', 'N3 (% sleep)']) expect(arch).toContain(h);
    await expect.poll(() => page.getByTestId('participants').locator('tbody tr').count()).toBe(FIXTURE_PARTICIPANTS.length);
    const errorsText = await page.getByTestId('ingest-errors').locator('tbody').innerText();
    expect(errorsText).toContain('sub-07_night.edf');
    expect(await page.getByTestId('research-note').innerText()).toBe('Research tool — not for diagnosis');
    expect(await page.getByTestId('run-parameters').innerText()).toContain('segment_s');
    await page.getByTestId('stage-figure').locator('svg').first().waitFor();

    // timing from navigation start to the rendered recordings table (reported, not asserted)
    const marks = await page.evaluate(() =>
      Object.fromEntries(
        ['bandwise:duckdb-ready', 'bandwise:database-open', 'bandwise:cohort-table'].map((n) => [
          n,
          Math.round(performance.getEntriesByName(n)[0]?.startTime ?? -1),
        ]),
      ),
    );
    expect(marks['bandwise:cohort-table']).toBeGreaterThan(0);
    console.log(`ms from navigation start: ${JSON.stringify(marks)}`);

    await page.screenshot({ path: path.join(OUTPUT, 'cohort.png'), fullPage: true });

    const db = s.requests.filter((r) => r.path === '/data/cohort.duckdb');
    const gets = db.filter((r) => r.method === 'GET');
    expect(gets.length).toBeGreaterThan(0);
    expect(gets.every((r) => r.status === 206 && r.range !== undefined)).toBe(true);
    const bytes = gets.reduce((a, r) => a + r.bytes, 0);
    console.log(
      `database: ${gets.length} range GETs, ${bytes} of ${statSync(dbPath).size} bytes; ` +
        `HEADs ${db.length - gets.length}; other paths: ${[...new Set(s.requests.map((r) => `${r.path} ${r.status}`))].filter((p) => !p.startsWith('/data/cohort.duckdb ')).join(', ')}`,
    );
  });

  it('keeps the view in the address bar and the note on every view', async () => {
    const { page } = s;
    await page.getByTestId('group-column').selectOption('sex');
    expect(new URL(page.url()).hash).toBe('#/cohort?by=sex');
    await expect.poll(() => page.getByTestId('group-sizes').locator('tbody tr td:first-child').allInnerTexts()).toEqual(['F', 'M']);
    await page.getByRole('link', { name: 'Quality screen' }).click();
    await page.getByTestId('quality-view').waitFor();
    expect(new URL(page.url()).hash).toBe('#/quality');
    expect(await page.getByTestId('research-note').isVisible()).toBe(true);
    await page.goBack();
    await page.getByTestId('group-sizes').waitFor();
    expect(await page.getByTestId('group-sizes').locator('tbody tr td:first-child').allInnerTexts()).toEqual(['F', 'M']);
  });

  it('exports tables as TSV and figures as SVG and PNG', async () => {
    const { page } = s;
    const [tsv] = await Promise.all([page.waitForEvent('download'), page.getByTestId('group-sizes').getByRole('button', { name: 'Export TSV' }).click()]);
    const text = readFileSync(await tsv.path(), 'utf8');
    const females = FIXTURE_PARTICIPANTS.filter((p) => p.sex === 'F');
    const femaleRecordings = females.filter((p) => p.ingested).length;
    expect(text.split('\n')[0]).toBe('group\tsubjects\trecordings\twithSpectra');
    expect(text).toContain(`F\t${females.length}\t${femaleRecordings}\t${femaleRecordings}\n`);
    const [svg] = await Promise.all([page.waitForEvent('download'), page.getByTestId('group-size-figure').getByRole('button', { name: 'SVG' }).click()]);
    expect(readFileSync(await svg.path(), 'utf8')).toMatch(/^<\?xml[^]*<svg[^]*xmlns="http:\/\/www.w3.org\/2000\/svg"/);
    // the stage figure has a legend: both the legend and the plot end up in the one SVG file
    const [stages] = await Promise.all([page.waitForEvent('download'), page.getByTestId('stage-figure').getByRole('button', { name: 'SVG' }).click()]);
    const stageSvg = readFileSync(await stages.path(), 'utf8');
    expect(stageSvg.match(/<svg/g)?.length).toBe(3);
    for (const label of ['N1', 'N3', 'sub-01', 'minutes']) expect(stageSvg).toContain(`>${label}`);
    const [png] = await Promise.all([page.waitForEvent('download'), page.getByTestId('group-size-figure').getByRole('button', { name: 'PNG' }).click()]);
    // PNG signature, PNG specification (ISO/IEC 15948) §5.2
    expect([...readFileSync(await png.path()).subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
  });

  it('opens a picked database file without the server', async () => {
    const { page } = s;
    const before = s.requests.length;
    await page.locator('input[type=file][accept=".duckdb,.db"]').setInputFiles(dbPath);
    await expect.poll(() => page.locator('.source span').first().innerText()).toBe('fixture.duckdb');
    await page.getByTestId('group-sizes').locator('tbody tr').first().waitFor();
    expect(await page.getByTestId('group-sizes').locator('tbody tr').count()).toBe(2);
    expect(s.requests.slice(before).filter((r) => r.path.startsWith('/data/'))).toEqual([]);
  });

  it('offers a file picker when no database is served, and opens the picked file', async () => {
    const page = await s.context.newPage();
    page.on('console', (m) => {
      // the blocked database probe is this test's own doing; anything else counts
      if (m.type() === 'error' && !m.text().includes('404')) s.consoleErrors.push(m.text());
    });
    await page.route('**/data/cohort.duckdb', (route) => route.fulfill({ status: 404, body: 'not found' }));
    await page.goto(`${s.server.url}#/cohort`);
    await page.getByRole('region', { name: 'Open a database file' }).waitFor();
    expect(await page.getByTestId('research-note').isVisible()).toBe(true);
    await page.locator('input[type=file][accept=".duckdb,.db"]').setInputFiles(dbPath);
    await page.getByTestId('group-sizes').locator('tbody tr').first().waitFor();
    expect(await page.getByTestId('group-sizes').locator('tbody tr td:first-child').allInnerTexts()).toEqual(['control', 'patient']);
    await page.close();
  });

  it('sent nothing beyond 127.0.0.1 and logged no console error', () => {
    expect(s.foreignRequests).toEqual([]);
    expect(s.consoleErrors).toEqual([]);
  });
});
