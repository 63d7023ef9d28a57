/**
 * The part of the current split an analysis reads: the exploration part (coded groups when the
 * split is blinded) for every analysis, the confirmation part (never blinded) for a confirmation.
 */
import type { Store } from '../../ingest/store/index.ts';
import type { PartView } from '../core/confirmation/part-data.ts';
import type { Part } from '../core/confirmation/split.ts';
import { readCurrentSplit, type StoredSplit } from './split-store.ts';

/** The view of one part of a stored split. */
export function viewOf(split: StoredSplit, part: Part): PartView {
  const subjects = new Set([...split.parts].filter(([, p]) => p === part).map(([s]) => s));
  const blinding = part === 'exploration' && split.codes !== null && split.stamp.blindColumn !== null ? { column: split.stamp.blindColumn, codes: split.codes } : null;
  return { split: split.stamp, part, subjects, blinding };
}

/** The part of the current split, or null when the database holds no split. */
export async function partView(store: Store, part: Part): Promise<PartView | null> {
  const split = await readCurrentSplit(store);
  return split === null ? null : viewOf(split, part);
}
