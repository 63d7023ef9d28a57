/**
 * `bandwise lock`: fixes an analysis plan — the contrasts, the ingest run, the exclusions and the
 * current split — under the SHA-256 of its canonical JSON, in the database and the ledger. A plan
 * is never changed: other contents are another plan, with another id.
 */
import { openStore } from '../../ingest/store/index.ts';
import { canonicalJson, sha256Hex } from '../../ingest/store/identity.ts';
import type { Exclusion } from '../core/contrast/data.ts';
import type { Contrast } from '../core/contrast/spec.ts';
import { BlindingError, requireCodedGroups, unblindContrast } from '../core/confirmation/blinding.ts';
import { planId, type PlanContent, type StoredPlan } from '../core/confirmation/plan.ts';
import { SplitError } from '../core/confirmation/split.ts';
import type { LooksBeforeLock } from '../core/confirmation/stamp.ts';
import type { Row } from '../queries/client.ts';
import { participants } from '../queries/cohort.ts';
import { chooseRun, runs } from '../queries/runs.ts';
import { cohortSchema } from '../queries/schema.ts';
import { storeClient } from './store-client.ts';
import { ensureSplitTables, insertPlan, readCurrentSplit, readPlan, type StoredSplit } from './split-store.ts';
import { appendLedger } from './ledger.ts';
import { looksAtConfirmation } from './confirm-history.ts';

export interface LockOutcome {
  plan: StoredPlan;
  /** the same plan was locked before (nothing new was stored) */
  existed: boolean;
  /** analyses that had included confirmation-part subjects before this lock */
  looks: LooksBeforeLock;
}

/** The split's coding as a blinding (null when the split is not blinded). */
export function splitBlinding(split: StoredSplit) {
  return split.codes !== null && split.stamp.blindColumn !== null ? { column: split.stamp.blindColumn, codes: split.codes } : null;
}

/** Each contrast must name participants columns and groups the database holds (groups of a blinded split by their codes, as while exploring). */
function checkContrasts(contrasts: readonly Contrast[], table: { columns: { name: string }[]; rows: Row[] }, split: StoredSplit): void {
  const names = table.columns.map((c) => c.name);
  const values = (col: string) =>
    new Set(
      table.rows
        .map((r) => r[col])
        .filter((v) => v !== null)
        .map(String),
    );
  contrasts.forEach((c, i) => {
    const where = `contrast ${i + 1}`;
    const used = [...(c.design === 'groups' ? [c.groupColumn] : []), ...(c.design === 'covariate' ? [c.covariate!] : []), ...c.nuisance];
    for (const col of used) if (!names.includes(col)) throw new SplitError(`${where}: participants has no column "${col}"`);
    if (c.design !== 'groups') return;
    requireCodedGroups(c, splitBlinding(split));
    const real = unblindContrast(c, splitBlinding(split));
    const have = values(c.groupColumn);
    if (!real.groups!.every((g) => have.has(g))) {
      throw new BlindingError(`${where}: the groups it names are not values of "${c.groupColumn}"`);
    }
  });
}

export async function lockPlan(
  dbPath: string,
  contrasts: Contrast[],
  exclusions: Exclusion[],
  runId: string | undefined,
  ledgerFile: string | null,
): Promise<LockOutcome> {
  if (contrasts.length === 0) throw new SplitError('a plan needs at least one contrast (--contrast)');
  const store = await openStore(dbPath);
  try {
    const split = await readCurrentSplit(store);
    if (split === null)
      throw new SplitError('the database holds no split: make one first (bandwise split), then lock the plan you explored on its exploration part');
    const db = storeClient(store);
    const schema = await cohortSchema(db);
    const run = chooseRun(await runs(db), runId);
    checkContrasts(contrasts, await participants(db, schema), split);
    const s = split.stamp;
    const content: PlanContent = {
      format: 1,
      runId: run.runId,
      contrasts,
      exclusions,
      split: { id: s.id, seed: s.seed, fraction: s.fraction, stratify: s.stratify, blindColumn: s.blindColumn },
    };
    const canonical = canonicalJson(content);
    const hash = sha256Hex(canonical);
    const id = planId(hash);
    const before = await readPlan(store, id);
    const plan: StoredPlan = before ?? { id, hash, lockedAt: new Date().toISOString(), content: JSON.parse(canonical) as PlanContent };
    if (!before) {
      await ensureSplitTables(store);
      await insertPlan(store, plan, canonical);
    }
    const looks = await looksAtConfirmation(store, split, plan.lockedAt, ledgerFile, dbPath);
    if (!before && ledgerFile)
      appendLedger(ledgerFile, dbPath, {
        kind: 'lock',
        contrast: contrasts,
        p: null,
        details: { planId: id, hash, splitId: s.id, runId: run.runId, exclusions: exclusions.length },
      });
    return { plan, existed: before !== null, looks };
  } finally {
    await store.close();
  }
}
