/**
 * The dashboard's own write path for the exploration/confirmation workflow: split, lock and
 * confirm, answered as JSON to POST /api/split, /api/lock and /api/confirm (serve.ts checks the
 * token, the origin and the content type first). Each runs the same function as its command
 * (make-split.ts, lock-plan.ts, confirm-plan.ts) on the served database and records itself in the
 * database's ledger, so the command line and the dashboard keep one history. One write at a time.
 * Input that the command would refuse is answered 400 with the command's one-line message; a
 * state the workflow refuses (a second split, no split, a missing plan) 409.
 */
import { z } from 'zod';
import { ContrastDataError } from '../core/contrast/data-error.ts';
import { ContrastSpecError, parseContrast } from '../core/contrast/spec.ts';
import { SplitError } from '../core/confirmation/split.ts';
import { StoreError } from '../../ingest/store/errors.ts';
import { makeSplit } from '../analysis/make-split.ts';
import { lockPlan } from '../analysis/lock-plan.ts';
import { confirmPlan } from '../analysis/confirm-plan.ts';
import type { ApiAnswer, ApiHandler } from './serve.ts';

const splitBody = z.strictObject({
  fraction: z.number().gt(0).lt(1),
  seed: z.number().int().min(0).max(2147483647),
  stratify: z.array(z.string().min(1)),
  blindColumn: z.string().min(1).nullable().optional(),
  replace: z.boolean().optional(),
});
const lockBody = z.strictObject({ contrasts: z.array(z.unknown()).min(1), runId: z.string().min(1).optional() });
const confirmBody = z.strictObject({ plan: z.string().regex(/^[0-9a-f]{6,64}$/) });

const invalid = (message: string): ApiAnswer => ({ status: 400, body: { error: message } });

function issues(e: z.ZodError): string {
  return e.issues.map((i) => `${i.path.join('.') || '(body)'}: ${i.message}`).join('; ');
}

/** The answer to a refused request: the message the command would print, never a stack trace. */
function refusal(e: unknown): ApiAnswer | null {
  if (e instanceof ContrastSpecError) return invalid(e.message);
  if (e instanceof SplitError || e instanceof ContrastDataError) return { status: 409, body: { error: e.message } };
  if (e instanceof StoreError) return { status: 503, body: { error: e.message } };
  return null;
}

/** The handler for one served database; `ledger` is the ledger file the steps are recorded in. */
export function workflowApi(dbPath: string, ledger: string): ApiHandler {
  let queue: Promise<unknown> = Promise.resolve();
  const oneAtATime = <T>(work: () => Promise<T>): Promise<T> => {
    const next = queue.then(work, work);
    queue = next.catch(() => undefined);
    return next;
  };

  async function answer(route: string, body: unknown): Promise<ApiAnswer> {
    if (route === 'split') {
      const r = splitBody.safeParse(body);
      if (!r.success) return invalid(issues(r.error));
      const b = r.data;
      const outcome = await makeSplit(
        dbPath,
        { fraction: b.fraction, seed: b.seed, stratify: b.stratify, blindColumn: b.blindColumn ?? null, replace: b.replace ?? false },
        ledger,
      );
      return {
        status: 200,
        body: { split: outcome.split.stamp, strata: outcome.strata, labelsTellGroups: outcome.labelsTellGroups, replaced: outcome.replaced ?? null },
      };
    }
    if (route === 'lock') {
      const r = lockBody.safeParse(body);
      if (!r.success) return invalid(issues(r.error));
      const contrasts = r.data.contrasts.map(parseContrast);
      const o = await lockPlan(dbPath, contrasts, [], r.data.runId, ledger);
      return { status: 200, body: { plan: { id: o.plan.id, hash: o.plan.hash, lockedAt: o.plan.lockedAt }, existed: o.existed, looks: o.looks } };
    }
    if (route === 'confirm') {
      const r = confirmBody.safeParse(body);
      if (!r.success) return invalid(issues(r.error));
      return { status: 200, body: { results: await confirmPlan(dbPath, r.data.plan, { ledger }) } };
    }
    return { status: 404, body: { error: `no such step: ${route} (split, lock or confirm)` } };
  }

  return (route, body) =>
    oneAtATime(async () => {
      try {
        return await answer(route, body);
      } catch (e) {
        const r = refusal(e);
        if (r) return r;
        throw e;
      }
    });
}
