/**
 * `bandwise split`: draws the split of the subjects (src/core/confirmation/split.ts) from the
 * participants table, with the group codes when blinded, stores it and records it in the ledger.
 * A second split replaces the first only when asked, and then says what ran on the old one.
 */
import type { Store } from '../../ingest/store/index.ts';
import { openStore } from '../../ingest/store/index.ts';
import { canonicalJson, sha256Hex } from '../../ingest/store/identity.ts';
import { drawGroupCodes, labelsTellGroups } from '../core/confirmation/blinding.ts';
import { drawSplit, stratumOf, SplitError, checkSplitSettings, type Part, type SplitSettings } from '../core/confirmation/split.ts';
import type { StoredPlan } from '../core/confirmation/plan.ts';
import { participants } from '../queries/cohort.ts';
import { cohortSchema, groupingColumns } from '../queries/schema.ts';
import { storeClient } from './store-client.ts';
import { ensureSplitTables, readConfirmations, readCurrentSplit, readPlans, writeSplit, type StoredSplit } from './split-store.ts';
import { appendLedger, readLedger } from './ledger.ts';

export interface SplitRequest extends SplitSettings {
  /** participants column whose values are coded while exploring; null: not blinded */
  blindColumn: string | null;
  /** replace the current split (otherwise a second split is refused) */
  replace: boolean;
}

/** What had been done on a replaced split. */
export interface ReplacedSplit {
  id: string;
  madeAt: string;
  /** analyses of the ledger on each of its parts */
  analyses: Record<Part, number>;
  /** plans locked on it, and how many confirmations each had */
  plans: { id: string; confirmations: number }[];
}

export interface SplitOutcome {
  split: StoredSplit;
  replaced: ReplacedSplit | null;
  /** subjects per stratum and part (empty when blinded: the strata would show group sizes) */
  strata: { stratum: string; exploration: number; confirmation: number }[];
  /** number of strata */
  strataCount: number;
  /** the subject labels tell the blinded groups apart (ctl01 … / pat01 …) */
  labelsTellGroups: boolean;
}

/** The database's participants as rows keyed by column, with the names of the text columns. */
async function participantRows(store: Store): Promise<{ rows: Record<string, string | number | null>[]; columns: string[]; text: string[] }> {
  const db = storeClient(store);
  const schema = await cohortSchema(db);
  const t = schema.has('participants', 'subject') ? await participants(db, schema) : { columns: [], rows: [] };
  if (t.rows.length === 0) throw new SplitError('the database has no participants table (or it is empty): a split needs the subjects');
  // booleans as their text, as the contrasts read them
  const rows = t.rows.map((r) => Object.fromEntries(Object.entries(r).map(([k, v]) => [k, typeof v === 'boolean' ? String(v) : v])));
  return { rows, columns: t.columns.map((c) => c.name), text: groupingColumns(schema) };
}

function replacedSummary(old: StoredSplit, plans: StoredPlan[], confirmations: { planId: string }[], ledgerFile: string | null, dbName: string): ReplacedSplit {
  const analyses: Record<Part, number> = { exploration: 0, confirmation: 0 };
  if (ledgerFile) {
    for (const e of readLedger(ledgerFile)) {
      if (e.database === dbName && e.splitId === old.stamp.id && e.part && (e.kind === 'compare' || e.kind === 'band-check')) analyses[e.part]++;
    }
  }
  const own = plans.filter((p) => p.content.split.id === old.stamp.id);
  return {
    id: old.stamp.id,
    madeAt: old.stamp.madeAt,
    analyses,
    plans: own.map((p) => ({ id: p.id, confirmations: confirmations.filter((c) => c.planId === p.id).length })),
  };
}

export async function makeSplit(dbPath: string, req: SplitRequest, ledgerFile: string | null): Promise<SplitOutcome> {
  checkSplitSettings(req);
  if (req.seed < 0 || req.seed > 2147483647) throw new SplitError(`invalid seed: ${req.seed} (a whole number from 0 to 2147483647)`);
  const dbName = dbPath.split(/[\\/]/).pop()!;
  const store = await openStore(dbPath);
  try {
    const { rows, columns, text } = await participantRows(store);
    for (const c of req.stratify)
      if (!columns.includes(c)) throw new SplitError(`--stratify: participants has no column "${c}" (columns: ${columns.join(', ')})`);
    if (req.blindColumn !== null && !text.includes(req.blindColumn))
      throw new SplitError(`--blind: participants has no text column "${req.blindColumn}" (text columns: ${text.join(', ') || 'none'})`);
    const current = await readCurrentSplit(store);
    if (current && !req.replace) {
      throw new SplitError(
        `the database already has split ${current.stamp.id} (made ${current.stamp.madeAt}); a second split is refused, as subjects explored in the first could land in the confirmation part of the second; replace it only knowingly, with --replace`,
      );
    }
    const replaced = current ? replacedSummary(current, await readPlans(store), await readConfirmations(store), ledgerFile, dbName) : null;
    const parts = drawSplit(
      rows.map((r) => ({ subject: String(r.subject), stratum: stratumOf(r, req.stratify) })),
      req,
    );
    const blind = req.blindColumn;
    const codes =
      blind === null
        ? null
        : drawGroupCodes(
            rows
              .map((r) => r[blind])
              .filter((v) => v !== null)
              .map(String),
            req.seed,
          );
    const madeAt = new Date().toISOString();
    const settings = { seed: req.seed, fraction: req.fraction, stratify: req.stratify, blindColumn: blind };
    const membership = [...parts].sort((a, b) => (a[0] < b[0] ? -1 : 1));
    const id = sha256Hex(canonicalJson({ ...settings, madeAt, parts: membership })).slice(0, 12);
    const count = (p: Part) => membership.filter(([, x]) => x === p).length;
    const split: StoredSplit = {
      stamp: { id, madeAt, ...settings, subjects: { exploration: count('exploration'), confirmation: count('confirmation') } },
      parts,
      codes,
      replacedAt: null,
    };
    await ensureSplitTables(store);
    await writeSplit(store, split);
    if (ledgerFile) {
      appendLedger(ledgerFile, dbPath, {
        kind: 'split',
        contrast: null,
        p: null,
        details: { splitId: id, ...settings, blinded: blind !== null, subjects: split.stamp.subjects, replaced: replaced?.id ?? null },
      });
    }
    const strata = new Map<string, { exploration: number; confirmation: number }>();
    for (const r of rows) {
      const k = stratumOf(r, req.stratify);
      const s = strata.get(k) ?? { exploration: 0, confirmation: 0 };
      s[parts.get(String(r.subject))!]++;
      strata.set(k, s);
    }
    return {
      split,
      replaced,
      strata: blind === null ? [...strata].sort().map(([stratum, s]) => ({ stratum, ...s })) : [],
      strataCount: strata.size,
      labelsTellGroups:
        blind !== null && labelsTellGroups(rows.map((r) => ({ subject: String(r.subject), group: r[blind] === null ? null : String(r[blind]) }))),
    };
  } finally {
    await store.close();
  }
}
