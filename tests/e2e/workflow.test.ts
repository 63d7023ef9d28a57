// End to end in Debian's chromium on a copy of the demo database (18 controls, 18 patients) after
// `bandwise split --blind`, `bandwise lock` and `bandwise confirm`, run through the command line's
// code: the "Split and plans" view shows the state (split, blinding, the plan and its confirmation)
// and the command of each step; the quality screen keeps every subject; every analysis view reads
// the exploration part and says so; and, blinded, no view
// shows a real group name or a count per coded group: the text of every view visited
// (document.body.textContent, hidden parts and figure labels included), the address, and the files
// the views export (contrast JSON, band-check result JSON, robustness curve JSON, methods Markdown and
// parameters JSON); the methods report
// view reads the confirmation's result JSON. Fails on any console error. Screenshots: test-output/e2e/{workflow,workflow-contrast}.png.
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/index.ts';
import { confirmPlan } from '../../src/analysis/confirm-plan.ts';
import type { CompareRun } from '../../src/analysis/compare-runner.ts';
import { lockPlan } from '../../src/analysis/lock-plan.ts';
import { makeSplit, type SplitOutcome } from '../../src/analysis/make-split.ts';
import { readConfirmations } from '../../src/analysis/split-store.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { demoDatabase } from '../helpers/demo-db.ts';
import { countsIn, perGroupNumbers, realNames } from '../confirmation/leaks.ts';
import { buildDashboard, openDashboard, type DashboardSession } from './harness.ts';
import { PATH_COLUMNS } from '../../src/dashboard/views/robustness/columns.ts';
import { workflowApi } from '../../src/server/workflow-api.ts';

const OUTPUT = path.resolve('test-output/e2e');
const REAL = ['control', 'patient'];
const CODES = ['group A', 'group B'];
const CODED = 'design=groups&groupColumn=group&groups=group%20A,group%20B&stage=N2&reference=recorded';
const CENTRO_PARIETAL = 'C3,C4,Cz,P3,P4,Pz';

describe('dashboard in chromium: the workflow state and blinded exploration', () => {
  let dir: string;
  let s: DashboardSession;
  let split: SplitOutcome;
  let planId: string;
  let confirmation: CompareRun;
  let confirmedAt: string;

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-e2e-workflow-'));
    const db = path.join(dir, 'cohort.duckdb');
    copyFileSync(await demoDatabase(), db);
    split = await makeSplit(db, { fraction: 0.5, seed: 11, stratify: ['group'], blindColumn: 'group', replace: false }, null);
    planId = (
      await lockPlan(
        db,
        [parseContrast({ design: 'groups', groups: ['group A', 'group B'], stage: 'N2', measure: 'residual', permutations: 200 })],
        [],
        undefined,
        null,
      )
    ).plan.id;
    // the confirmation as `bandwise confirm` runs it (200 permutations keep it short)
    [confirmation] = await confirmPlan(db, planId, { ledger: path.join(dir, 'ledger.jsonl') });
    writeFileSync(path.join(dir, 'confirmation.json'), JSON.stringify(confirmation));
    const store = await openStore(db, { readOnly: true });
    try {
      confirmedAt = (await readConfirmations(store))[0].time;
    } finally {
      await store.close();
    }
    await buildDashboard(path.join(dir, 'app'));
    s = await openDashboard(path.join(dir, 'app'), db, { ledgerPath: path.join(dir, 'ledger.jsonl'), api: workflowApi(db, path.join(dir, 'ledger.jsonl')) });
    mkdirSync(OUTPUT, { recursive: true });
  });

  afterAll(async () => {
    await s?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  /** Neither a real group name nor a count per coded group in the page, hidden text and figures included, nor in the address. */
  async function blinded(where: string): Promise<void> {
    const text = await s.page.evaluate(() => document.body.textContent ?? '');
    expect(realNames(text, REAL), where).toEqual([]);
    expect(countsIn(text, CODES), where).toEqual([]);
    expect(realNames(decodeURIComponent(s.page.url()), REAL), where).toEqual([]);
  }

  it('"Split and plans" shows the split, the blinding, the plan with its confirmation, and the command of each step', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/workflow`);
    await page.getByTestId('workflow-view').waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('split-state').innerText()).toContain(
      `Split ${split.split.stamp.id}, made ${split.split.stamp.madeAt}: exploration 18 subjects, confirmation 18 (seed 11, 50 % of each stratum for exploration, stratified by group)`,
    );
    expect(await page.getByTestId('blind-state').innerText()).toContain('the groups of "group" show as group A, group B');
    await page.getByTestId('plans').locator('tbody tr').first().waitFor();
    const row = await page
      .getByTestId('plans')
      .locator('tbody tr')
      .first()
      .evaluate((tr) => Array.from(tr.querySelectorAll('td'), (td) => td.textContent?.trim() ?? ''));
    expect(row[0]).toBe(planId);
    expect(row).toContain(confirmedAt);
    expect(row[4]).toContain('group B − group A (group), N2, residual');
    const steps = await page.getByTestId('workflow-steps').innerText();
    expect(steps).toContain(`bandwise confirm cohort.duckdb --plan ${planId} --out confirmation.json`);
    expect(steps).toContain('bandwise lock cohort.duckdb --contrast contrast.json --exclusions exclusions.tsv');
    expect(steps).toContain('load confirmation.json there');
    await blinded('workflow view');
    await page.screenshot({ path: path.join(OUTPUT, 'workflow.png'), fullPage: true });
  });

  it("cohort: the blinded column neither shown nor offered; each subject's part shown", async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/cohort?by=group`);
    await page.getByTestId('participants').locator('tbody tr').first().waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('cohort-blinded').isVisible()).toBe(true);
    const headers = await page.getByTestId('participants').locator('thead th').allInnerTexts();
    expect(headers.map((h) => h.trim().split(/\s/)[0])).toContain('part');
    expect(headers.map((h) => h.trim().split(/\s/)[0])).not.toContain('group');
    expect(await page.getByTestId('group-column').locator('option').allInnerTexts()).not.toContain('group');
    await blinded('cohort view');
  });

  it("quality screen stays available on every subject of both parts, a cell's detail included, and shows no group", async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/quality?subject=pat07&channel=Cz`);
    await page.getByTestId('quality-grid').locator('svg').first().waitFor({ timeout: 60_000 });
    // the grid draws one cell per subject and channel: all 36 subjects, not only the 18 explored
    const cells = await page.locator('[data-testid=quality-grid] rect[data-cell]').evaluateAll((rs) => rs.map((r) => r.getAttribute('data-cell') ?? ''));
    expect(new Set(cells.map((c) => c.split('|')[0])).size).toBe(36);
    await page.getByTestId('cell-detail').waitFor({ timeout: 30_000 });
    await page.getByTestId('cell-spectrum').locator('svg').first().waitFor({ timeout: 30_000 });
    await blinded('quality screen');
  });

  it('contrast: coded groups offered, the exploration part used and said, group sizes pooled; the saved contrast names the codes', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/contrast?${CODED}&channels=all&fminHz=1&fmaxHz=30&measure=residual&permutations=200`);
    await page.getByTestId('contrast-form').waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('part-note').innerText()).toContain(`Exploration part only: 18 of 36 subjects (split ${split.split.stamp.id})`);
    await expect.poll(() => page.getByTestId('c-group-0').locator('option').allInnerTexts(), { timeout: 60_000 }).toEqual(expect.arrayContaining(CODES));
    await expect.poll(() => page.getByTestId('run-contrast').isEnabled(), { timeout: 60_000 }).toBe(true);
    await page.getByTestId('run-contrast').click();
    await page.getByTestId('contrast-result').waitFor({ timeout: 120_000 });
    await page.getByTestId('contrast-spectra').locator('svg').first().waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('contrast-n').innerText()).toMatch(/^n: both groups 1[78] ·/);
    expect(await page.getByTestId('result-part').innerText()).toContain('exploration part of split');
    await blinded('contrast view');
    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByTestId('save-contrast').click()]);
    const saved = JSON.parse(readFileSync(await dl.path(), 'utf8'));
    expect(saved.groups).toEqual(CODES);
    await page.screenshot({ path: path.join(OUTPUT, 'workflow-contrast.png'), fullPage: true });
  });

  it('spectra: the exploration part, the coded groups without their sizes', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/spectra?stage=N2&by=group`);
    await page.getByTestId('spectra-figure').locator('svg').first().waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('part-note').isVisible()).toBe(true);
    const legend = await page.getByTestId('spectra-figure').innerText();
    expect(legend).toContain('group A');
    expect(legend).not.toContain('(n =');
    await blinded('spectra view');
  });

  it('band check and its methods report: pooled sizes, the blinding said, nothing exported names a real group', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/band-check?${CODED}&channels=${CENTRO_PARIETAL}&band=sigma:12-16&permutations=200`);
    await page.getByTestId('band-check-form').waitFor({ timeout: 60_000 });
    await expect.poll(() => page.getByTestId('run-band-check').isEnabled(), { timeout: 60_000 }).toBe(true);
    await page.getByTestId('run-band-check').click();
    await page.getByTestId('band-check-result').waitFor({ timeout: 180_000 });
    await page.getByTestId('band-check-figure').locator('svg').first().waitFor();
    expect(await page.getByTestId('verdict-word').innerText()).toBe('band-specific');
    expect(await page.getByTestId('band-check-n').innerText()).toMatch(/^n: both groups \d+/);
    await blinded('band check view');
    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByTestId('save-band-check').click()]);
    const result = JSON.parse(readFileSync(await dl.path(), 'utf8'));
    expect(result).toMatchObject({ part: 'exploration', blinded: true });
    expect(perGroupNumbers(result, CODES)).toEqual([]);
    expect(realNames(JSON.stringify(result), REAL)).toEqual([]);
    await page.getByTestId('to-report').click();
    await page.getByTestId('methods-text').waitFor({ timeout: 60_000 });
    const methods = await page.getByTestId('methods-text').innerText();
    expect(methods).toContain('Exploration and confirmation');
    expect(methods).toContain('were blinded');
    const [md] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-markdown').click()]);
    const markdown = readFileSync(await md.path(), 'utf8');
    expect(realNames(markdown, REAL)).toEqual([]);
    expect(countsIn(markdown, CODES)).toEqual([]);
    const [pj] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-parameters').click()]);
    const parameters = JSON.parse(readFileSync(await pj.path(), 'utf8'));
    expect(parameters.split).toMatchObject({ part: 'exploration', blinded: true });
    expect(perGroupNumbers(parameters, CODES)).toEqual([]);
    expect(realNames(JSON.stringify(parameters), REAL)).toEqual([]);
    await blinded('methods report view');
  });

  it('robustness: the paths pool their group sizes', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/robustness?${CODED}&channels=${CENTRO_PARIETAL}&band=sigma:12-16&permutations=50`);
    await page.getByTestId('robustness-form').waitFor({ timeout: 60_000 });
    await expect.poll(() => page.getByTestId('run-robustness').isEnabled(), { timeout: 60_000 }).toBe(true);
    await page.getByTestId('run-robustness').click();
    await page.getByTestId('robustness-result').waitFor({ timeout: 240_000 });
    // the n column, wherever the table places it (src/dashboard/views/robustness/columns.ts)
    const nth = PATH_COLUMNS.findIndex((c) => c.key === 'n') + 1;
    const n = await page.getByTestId('paths-table').locator(`tbody tr td:nth-child(${nth})`).allInnerTexts();
    expect(n.length).toBeGreaterThan(0);
    for (const x of n) expect(x).toMatch(/^both groups \d+$/);
    expect(await page.getByTestId('result-part').innerText()).toContain('groups blinded, group sizes pooled');
    await blinded('robustness view');
    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByTestId('save-robustness').click()]);
    const curve = JSON.parse(readFileSync(await dl.path(), 'utf8'));
    expect(curve.paths.length).toBeGreaterThanOrEqual(n.length);
    expect(perGroupNumbers(curve, CODES)).toEqual([]);
    expect(realNames(JSON.stringify(curve), REAL)).toEqual([]);
  });

  it('the methods report view reads the confirmation result: the plan, its hash and lock time, the groups unblinded', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/report`);
    await page.getByTestId('report-view').waitFor({ timeout: 60_000 });
    await page.getByTestId('load-result').setInputFiles(path.join(dir, 'confirmation.json'));
    await page.getByTestId('methods-text').waitFor({ timeout: 60_000 });
    const methods = await page.getByTestId('methods-text').innerText();
    const p = confirmation.plan!;
    expect(p).toMatchObject({ id: planId, confirmationRun: 1 });
    expect(methods).toContain(`This is the confirmatory analysis of plan ${planId}, locked at ${p.lockedAt} (SHA-256 of the plan's canonical JSON: ${p.hash})`);
    expect(methods).toContain('before this analysis of the confirmation part');
    // the plan named the codes; the confirmation says which real group each was
    const [a, b] = confirmation.contrast.groups!;
    expect([a, b].sort()).toEqual(REAL);
    expect(methods).toContain(`they were unblinded for this analysis: ${p.lockedContrast.groups![0]} is ${a} and ${p.lockedContrast.groups![1]} is ${b}`);
    expect(methods).toContain('records no analysis that included confirmation-part subjects before the plan was locked');
  });

  it('a confirmation taken from the dashboard is stored, read again into the plans table and marked as not the first', async () => {
    const { page } = s;
    await page.goto(`${s.server.url}#/workflow`);
    await page.getByTestId('workflow-actions').waitFor({ timeout: 60_000 });
    // a split exists, so a new one needs "replace" ticked first
    expect(await page.getByTestId('take-split').isDisabled()).toBe(true);
    await page.getByTestId(`take-confirm-${planId}`).click();
    await page.getByTestId('step-done').waitFor({ timeout: 240_000 });
    expect(await page.getByTestId('step-done').innerText()).toContain(`plan ${planId}: confirmation 2 (not the first: not a held-out test)`);
    // the database was read again: the plan now shows two confirmations
    const confirmationsAt = (await page.getByTestId('plans').locator('thead th').allInnerTexts()).findIndex((h) => h.startsWith('Confirmations'));
    await expect
      .poll(
        () =>
          page
            .getByTestId('plans')
            .locator(`tbody tr td:nth-child(${confirmationsAt + 1})`)
            .first()
            .innerText(),
        { timeout: 60_000 },
      )
      .toBe('2');
    const ledger = readFileSync(path.join(dir, 'ledger.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    expect(
      ledger.filter((e) => e.planId === planId).map((e) => e.confirmationRun),
      JSON.stringify(ledger.slice(0, 4)),
    ).toEqual([1, 2]);
    await page.getByRole('link', { name: 'open it' }).click();
    await page.getByTestId('methods-text').waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('methods-text').innerText()).toContain('not the first');
  });

  it('no console error, no request off this machine', () => {
    expect(s.consoleErrors).toEqual([]);
    expect(s.foreignRequests).toEqual([]);
  });
});
