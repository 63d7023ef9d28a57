/** The hypnogram of one recording: its scoring file, or else the EDF+ annotations. */
import path from 'node:path';
import type { CohortRecording } from '../cohort/types.ts';
import type { EdfFile } from '../edf/reader.ts';
import { readScoring, scoringFromAnnotations, type Hypnogram } from '../hypnogram/index.ts';
import { PipelineError } from './error.ts';
import type { IngestParams } from './params.ts';

export async function readHypnogram(edf: EdfFile, rec: CohortRecording, params: IngestParams): Promise<Hypnogram> {
  try {
    if (rec.scoringPath) {
      const separate = path.extname(rec.scoringPath).toLowerCase() === '.edf';
      return await readScoring(rec.scoringPath, { epochS: params.epochS, recordingDurationS: edf.durationS, separateAnnotationFile: separate });
    }
    const startS = edf.recordOnsetsS.length ? edf.recordOnsetsS[0] : 0;
    const annotations = edf.annotations.map((a) => ({ ...a, onsetS: a.onsetS - startS }));
    return scoringFromAnnotations(annotations, edf.file, `annotations:${path.basename(edf.file)}`, { epochS: params.epochS, recordingDurationS: edf.durationS });
  } catch (e) {
    throw new PipelineError('scoring', rec.scoringPath ?? edf.file, null, e instanceof Error ? e.message : String(e), { cause: e });
  }
}
