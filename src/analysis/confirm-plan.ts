/**
 * `bandwise confirm`: runs a locked plan's contrasts on the confirmation part of its split,
 * unblinded (coded group names of the plan replaced by the real ones), records the confirmation in
 * the database and the ledger, and stamps each result with the plan: its id, hash, lock time, the
 * number of this confirmation, and the looks at the confirmation part before the lock.
 */
import { openStore } from '../../ingest/store/index.ts';
import { unblindContrast } from '../core/confirmation/blinding.ts';
import { planAlpha, type StoredPlan } from '../core/confirmation/plan.ts';
import { SplitError } from '../core/confirmation/split.ts';
import type { ProgressCallback } from '../core/stats/index.ts';
import { compareDatabase, type CompareRun } from './compare-runner.ts';
import { appendLedger } from './ledger.ts';
import { looksAtConfirmation } from './confirm-history.ts';
import { splitBlinding } from './lock-plan.ts';
import { insertConfirmation, readConfirmations, readCurrentSplit, readPlan, readPlans, type StoredSplit } from './split-store.ts';

export interface ConfirmOptions {
  /** ledger the confirmation is recorded in and the looks are read from */
  ledger: string;
  /** progress of contrast k (0-based) */
  onProgress?: (k: number) => ProgressCallback;
  threads?: number;
}

async function planAndSplit(dbPath: string, id: string): Promise<{ plan: StoredPlan; split: StoredSplit }> {
  const store = await openStore(dbPath, { readOnly: true });
  try {
    const plan = await readPlan(store, id);
    if (plan === null) {
      const ids = (await readPlans(store)).map((p) => p.id);
      throw new SplitError(`the database holds no plan ${id} (${ids.length > 0 ? `plans: ${ids.join(', ')}` : 'no plan is locked: bandwise lock'})`);
    }
    const split = await readCurrentSplit(store);
    if (split === null || split.stamp.id !== plan.content.split.id) {
      throw new SplitError(
        `plan ${id} was locked on split ${plan.content.split.id}, which is no longer the current split${split ? ` (${split.stamp.id} replaced it)` : ''}: its confirmation part is gone`,
      );
    }
    return { plan, split };
  } finally {
    await store.close();
  }
}

/** The plan's contrasts confirmed, one result each (in the plan's order). */
export async function confirmPlan(dbPath: string, id: string, o: ConfirmOptions): Promise<CompareRun[]> {
  const { plan, split } = await planAndSplit(dbPath, id);
  const locked = plan.content.contrasts;
  const results: CompareRun[] = [];
  for (let k = 0; k < locked.length; k++) {
    const c = unblindContrast(locked[k], splitBlinding(split));
    results.push(
      await compareDatabase(dbPath, c, plan.content.exclusions, o.onProgress?.(k), plan.content.runId, { part: 'confirmation', threads: o.threads }),
    );
  }
  // recorded once the results exist, before anyone sees them
  const time = new Date().toISOString();
  const store = await openStore(dbPath);
  let run: number;
  let earlier: string[];
  let looks;
  try {
    earlier = (await readConfirmations(store)).filter((c) => c.planId === id).map((c) => c.time);
    run = await insertConfirmation(store, id, time);
    looks = await looksAtConfirmation(store, split, plan.lockedAt, o.ledger, dbPath);
  } finally {
    await store.close();
  }
  return results.map((r, k) => {
    const stamped: CompareRun = {
      ...r,
      plan: {
        id,
        hash: plan.hash,
        lockedAt: plan.lockedAt,
        confirmationRun: run,
        earlierConfirmations: earlier,
        contrastIndex: k + 1,
        contrasts: locked.length,
        alpha: planAlpha(locked.length),
        lockedContrast: locked[k],
        exclusions: plan.content.exclusions.length,
        analysedBeforeLock: looks,
      },
    };
    appendLedger(o.ledger, dbPath, stamped);
    return stamped;
  });
}
