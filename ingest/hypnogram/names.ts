/**
 * How scoring messages name an annotation text. Free texts can hold names, birth dates or record
 * numbers, so no message ever quotes one: a text that is a recognised stage label (built-in or
 * from the user's label map) is shown as written, any other text only by a short hash of it —
 * the same text gives the same hash, so the user can find every place it occurs.
 */
import { createHash } from 'node:crypto';
import { stageFromLabel, type LabelMap } from '../../src/core/hypnogram/labels.ts';

/** "text #1a2b3c4d": the first 8 hex digits of the SHA-256 of the UTF-8 text. */
export function textHash(text: string): string {
  return `text #${createHash('sha256').update(text, 'utf8').digest('hex').slice(0, 8)}`;
}

/** A recognised stage label in quotes, anything else as its hash. */
export function nameOfLabel(text: string, labelMap?: LabelMap): string {
  return stageFromLabel(text, labelMap) !== undefined ? `'${text}'` : textHash(text);
}
