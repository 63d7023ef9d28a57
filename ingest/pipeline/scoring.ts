/** The scoring of one recording: its scoring file or its own annotations, aligned by absolute time, with the lights marks (ingest/hypnogram/recording.ts). */
import type { CohortRecording } from '../cohort/types.ts';
import type { EdfFile } from '../edf/reader.ts';
import { scoringForRecording, type RecordingScoring } from '../hypnogram/index.ts';
import { PipelineError } from './error.ts';
import type { IngestParams } from './params.ts';

export async function readHypnogram(edf: EdfFile, rec: CohortRecording, params: IngestParams): Promise<RecordingScoring> {
  try {
    return await scoringForRecording(edf, rec, { ...params.scoring, epochS: params.epochS });
  } catch (e) {
    throw new PipelineError('scoring', rec.scoringPath ?? edf.file, null, e instanceof Error ? e.message : String(e), { cause: e });
  }
}
