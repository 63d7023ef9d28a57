/**
 * The looks at a split's confirmation part before a time (a plan's lock): from the ledger beside
 * the database and the confirmations the database holds (src/core/confirmation/history.ts).
 */
import { existsSync } from 'node:fs';
import type { Store } from '../../ingest/store/index.ts';
import { looksBeforeLock } from '../core/confirmation/history.ts';
import type { Part } from '../core/confirmation/split.ts';
import type { LooksBeforeLock } from '../core/confirmation/stamp.ts';
import { readLedger } from './ledger.ts';
import { readConfirmations, readPlans, readSplits, type StoredSplit } from './split-store.ts';

export async function looksAtConfirmation(store: Store, split: StoredSplit, time: string, ledgerFile: string | null, dbPath: string): Promise<LooksBeforeLock> {
  const dbName = dbPath.split(/[\\/]/).pop()!;
  const entries = ledgerFile && existsSync(ledgerFile) ? readLedger(ledgerFile).filter((e) => e.database === dbName) : [];
  const splits = await readSplits(store);
  const onThisSplit = new Set((await readPlans(store)).filter((p) => p.content.split.id === split.stamp.id).map((p) => p.id));
  const confirmations = (await readConfirmations(store)).filter((c) => onThisSplit.has(c.planId));
  const partSubjects = (id: string, part: Part) => {
    const s = splits.find((x) => x.stamp.id === id);
    return s ? new Set([...s.parts].filter(([, p]) => p === part).map(([x]) => x)) : null;
  };
  const confirmation = new Set([...split.parts].filter(([, p]) => p === 'confirmation').map(([s]) => s));
  return looksBeforeLock(entries, time, { splitId: split.stamp.id, confirmation }, partSubjects, confirmations);
}
