/**
 * Scoring from EDF+ annotations (Kemp & Olivan 2003: TALs with onset, optional duration and texts).
 * Each text of an annotation is read as a stage label; texts that are not stage labels
 * ('Arousal') are other events, ignored and listed in a warning by onset and a short hash of
 * the text, never the text itself (names.ts). Lights off/on texts are taken out before (edf.ts,
 * lights.ts). Onsets are seconds from the recording start (already shifted). A stage
 * annotation without duration scores one epoch; one with a duration fills every epoch it spans.
 * Empty texts (the time-keeping TAL of each data record) are not annotations and are skipped.
 */
import type { StageInterval } from './epochs.ts';
import { hypnogramFromIntervals } from './epochs.ts';
import type { Hypnogram, ScoringOptions } from './types.ts';

export interface EdfAnnotation {
  onsetS: number;
  durationS: number | null;
  texts: string[];
}

export function scoringFromAnnotations(annotations: readonly EdfAnnotation[], file: string, source: string, options: ScoringOptions = {}): Hypnogram {
  const intervals: StageInterval[] = [];
  for (const a of annotations) {
    for (const raw of a.texts) {
      const label = raw.trim();
      if (label === '') continue;
      intervals.push({ onsetS: a.onsetS, durationS: a.durationS, label, where: `annotation at ${a.onsetS} s` });
    }
  }
  return hypnogramFromIntervals(intervals, { file, source, eventStyle: true }, options);
}
