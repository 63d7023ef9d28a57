/**
 * Scoring from the EDF+ annotations of an EDF file: the recording itself, or a separate
 * annotation EDF. Annotation onsets are seconds from the file's start time (EDF+ 2003 §2.2.2);
 * the epoch grid starts at the first data record's onset, so onsets are counted from there.
 * For the recording itself the recording length is the file's; for a separate annotation file
 * pass the recording's length as `recordingDurationS` (the annotation file's own length says
 * nothing about the recording). EDF read errors (EdfFormatError, EdfIoError) pass through.
 */
import path from 'node:path';
import { openEdf } from '../edf/reader.ts';
import type { EdfFile } from '../edf/reader.ts';
import { scoringFromAnnotations } from './annotations.ts';
import type { Hypnogram, ScoringOptions } from './types.ts';

export interface EdfScoringOptions extends ScoringOptions {
  /** true: `file` is a separate annotation EDF, and its own length is not the recording's. */
  separateAnnotationFile?: boolean;
}

export async function readScoringEdf(file: string, options: EdfScoringOptions = {}): Promise<Hypnogram> {
  const edf = await openEdf(file);
  try {
    return scoringFromOpenEdf(edf, options);
  } finally {
    await edf.close();
  }
}

/** The same from an EDF file already open (the recording being ingested); does not close it. */
export function scoringFromOpenEdf(edf: EdfFile, options: EdfScoringOptions = {}): Hypnogram {
  const startS = edf.recordOnsetsS.length ? edf.recordOnsetsS[0] : 0;
  const annotations = edf.annotations.map((a) => ({ ...a, onsetS: a.onsetS - startS }));
  const recordingDurationS = options.recordingDurationS !== undefined ? options.recordingDurationS : options.separateAnnotationFile ? null : edf.durationS;
  return scoringFromAnnotations(annotations, edf.file, `annotations:${path.basename(edf.file)}`, { ...options, recordingDurationS });
}
