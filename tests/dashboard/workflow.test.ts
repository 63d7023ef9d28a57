// The dashboard's side of the exploration/confirmation workflow over duckdb-wasm (the browser's
// engine), on the fixture database after `split --blind` and `lock` and one confirmation written by
// the command line's code (@duckdb/node-api): the state it reads equals what the command line
// stored; every loader the views use (contrast rows, band check and robustness rows, spectra, form
// choices, cohort) sees the exploration part only, with the groups coded, row for row as over the
// command line's client; the cohort view leaves the blinded column out and adds each subject's part.
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStore } from '../../ingest/store/index.ts';
import { withDatabase } from '../../src/analysis/store-client.ts';
import { lockPlan } from '../../src/analysis/lock-plan.ts';
import { makeSplit, type SplitOutcome } from '../../src/analysis/make-split.ts';
import { insertConfirmation, readCurrentSplit } from '../../src/analysis/split-store.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { loadChoices } from '../../src/dashboard/analysis/form-choices.ts';
import { loadPathDataSets } from '../../src/queries/band-check-data.ts';
import { loadContrastData } from '../../src/queries/contrast-data.ts';
import { runs } from '../../src/queries/runs.ts';
import { cohortSchema, CohortSchema } from '../../src/queries/schema.ts';
import { readWorkflow, workflowOf } from '../../src/queries/workflow.ts';
import { chooseGroupColumn, loadCohort } from '../../src/dashboard/views/cohort/cohort-data.ts';
import { loadSpectraRows } from '../../src/dashboard/views/spectra/spectra-data.ts';
import { planRows, workflowSteps } from '../../src/dashboard/views/workflow/workflow-data.ts';
import { makeFixtureDb } from '../fixtures/make-fixture-db.ts';
import { wasmClientFor } from './wasm-client.ts';

describe('the workflow in the dashboard (duckdb-wasm) on a blinded split', () => {
  let dir: string;
  let file: string;
  let client: Awaited<ReturnType<typeof wasmClientFor>>;
  let schema: CohortSchema;
  let split: SplitOutcome;
  let planId: string;

  beforeAll(async () => {
    dir = mkdtempSync(path.join(os.tmpdir(), 'bandwise-workflow-'));
    file = path.join(dir, 'fixture.duckdb');
    await makeFixtureDb(file);
    split = await makeSplit(file, { fraction: 0.5, seed: 5, stratify: ['group'], blindColumn: 'group', replace: false }, null);
    const plan = await lockPlan(file, [parseContrast({ design: 'groups', groups: ['group A', 'group B'], stage: 'N2' })], [], undefined, null);
    planId = plan.plan.id;
    const store = await openStore(file);
    try {
      await insertConfirmation(store, planId, '2026-02-01T10:00:00.000Z');
    } finally {
      await store.close();
    }
    client = await wasmClientFor(file);
    schema = await cohortSchema(client);
  });

  afterAll(() => {
    client.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('reads the split, its exploration part and the codes, and the plan with its confirmation, as stored', async () => {
    const w = await readWorkflow(client, schema);
    expect(w.split).toEqual(split.split.stamp);
    expect(w.view!.subjects).toEqual(new Set([...split.split.parts].filter(([, p]) => p === 'exploration').map(([s]) => s)));
    expect(w.view!.blinding).toEqual({ column: 'group', codes: split.split.codes });
    expect(w.plans.map((p) => [p.id, p.confirmations])).toEqual([[planId, [{ run: 1, time: '2026-02-01T10:00:00.000Z' }]]]);
    expect(w.plans[0].contrasts[0].groups).toEqual(['group A', 'group B']);
    expect(await workflowOf(client, schema)).toBe(await workflowOf(client, schema));
    const rows = planRows(w);
    expect(rows[0]).toMatchObject({ plan: planId, split: `${split.split.stamp.id} (current)`, confirmations: 1 });
    const steps = workflowSteps(w, 'cohort.duckdb', 20260203);
    expect(steps.map((s) => s.done)).toEqual([true, true, true, true, false]);
    // the view adds " — done" after a done step's title; its text does not say it again
    expect(steps.filter((s) => s.done).map((s) => s.text.startsWith('Done'))).toEqual([false, false, false, false]);
    expect(steps[3].command).toBe(`bandwise confirm cohort.duckdb --plan ${planId} --out confirmation.json`);
  });

  it('a database without the tables has no split', async () => {
    const without = new CohortSchema(new Map([...schema.tables].filter(([t]) => !['subject_split', 'analysis_plans', 'plan_confirmations'].includes(t))));
    const w = await readWorkflow(client, without);
    expect([w.split, w.view, w.plans]).toEqual([null, null, []]);
  });

  it("contrast rows: the exploration part, coded, row for row as the command line's client reads them; real group names refused; the confirmation part unblinded", async () => {
    const c = parseContrast({ design: 'groups', groups: ['group A', 'group B'], stage: 'N2', fminHz: 1, fmaxHz: 20 });
    const ours = await loadContrastData(client, schema, await runs(client), c, []);
    const theirs = await withDatabase(file, async (db) => loadContrastData(db, await cohortSchema(db), await runs(db), c, []));
    const store = await openStore(file, { readOnly: true });
    try {
      expect((await readCurrentSplit(store))!.stamp.id).toBe(split.split.stamp.id);
    } finally {
      await store.close();
    }
    const explored = new Set([...split.split.parts].filter(([, p]) => p === 'exploration').map(([s]) => s));
    expect(new Set(ours.data.spectra.rows.map((r) => r.subject))).toEqual(new Set(theirs.data.spectra.rows.map((r) => r.subject)));
    expect(ours.data.spectra.rows.every((r) => explored.has(r.subject))).toBe(true);
    expect(ours.data.participants.map((p) => [p.subject, p.group])).toEqual(theirs.data.participants.map((p) => [p.subject, p.group]));
    expect(new Set(ours.data.participants.map((p) => p.group))).toEqual(new Set(['group A', 'group B']));
    await expect(
      loadContrastData(client, schema, await runs(client), parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2' }), []),
    ).rejects.toThrow('are blinded while exploring');
    const held = await loadContrastData(
      client,
      schema,
      await runs(client),
      parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2' }),
      [],
      { part: 'confirmation' },
    );
    expect(held.view).toMatchObject({ part: 'confirmation', blinding: null });
    expect(new Set(held.data.spectra.rows.map((r) => r.subject))).toEqual(
      new Set([...split.split.parts].filter(([, p]) => p === 'confirmation').map(([s]) => s)),
    );
    expect(new Set(held.data.participants.map((p) => p.group))).toEqual(new Set(['control', 'patient']));
  });

  it("robustness and spectra rows, and the form's group values: the exploration part, coded", async () => {
    const c = parseContrast({ design: 'groups', groups: ['group A', 'group B'], stage: 'N2' });
    const explored = [...split.split.parts].filter(([, p]) => p === 'exploration').map(([s]) => s);
    for (const set of await loadPathDataSets(client, schema, await runs(client), c, [{ reference: 'recorded', averaging: 'mean' }], [])) {
      expect(set.data.spectra.rows.every((r) => explored.includes(r.subject))).toBe(true);
      expect(set.data.participants.every((p) => String(p.group).startsWith('group '))).toBe(true);
    }
    const spectra = await loadSpectraRows(client, schema, await runs(client), { stage: 'N2', reference: 'recorded', averaging: 'mean' });
    expect(spectra.rows.every((r) => explored.includes(r.subject))).toBe(true);
    expect(spectra.participants.map((p) => p.subject).sort()).toEqual(explored.sort());
    expect((await loadChoices(client, schema)).textColumns.get('group')).toEqual(['group A', 'group B']);
  });

  it("cohort view: the blinded column neither shown nor offered; each subject's part added", async () => {
    const w = await readWorkflow(client, schema);
    expect(chooseGroupColumn(schema, 'group', 'group')).toBe('sex');
    const cohort = await loadCohort(client, schema, 'sex', w);
    expect(cohort.participantColumns.map((c) => c.name)).toEqual(['subject', 'age', 'sex', 'part']);
    expect(cohort.participants.every((p) => !('group' in p) && (p.part === 'exploration' || p.part === 'confirmation'))).toBe(true);
    await expect(loadCohort(client, schema, 'group', w)).rejects.toThrow('blinded');
  });
});
