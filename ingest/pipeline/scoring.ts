/** The scoring of one recording: its scoring file or its own annotations, aligned by absolute time, with the lights marks (ingest/hypnogram/recording.ts). */
import type { CohortRecording } from '../cohort/types.ts';
import type { EdfFile } from '../edf/reader.ts';
import { scoringForRecording, type RecordingScoring } from '../hypnogram/index.ts';
import { ScoringError } from '../hypnogram/types.ts';
import { PipelineError } from './error.ts';
import type { IngestParams } from './params.ts';

export async function readHypnogram(edf: EdfFile, rec: CohortRecording, params: IngestParams): Promise<RecordingScoring> {
  try {
    return await scoringForRecording(edf, rec, { ...params.scoring, epochS: params.epochS });
  } catch (e) {
    // one line for ingest_errors and the summary: the problems joined by '; '
    const n = e instanceof ScoringError ? e.problems.length : 0;
    const message =
      e instanceof ScoringError && n > 0
        ? `${e.file}: ${n} scoring problem${n === 1 ? '' : 's'}: ${e.problems.map((p) => p.message).join('; ')}`
        : e instanceof Error
          ? e.message
          : String(e);
    throw new PipelineError('scoring', rec.scoringPath ?? edf.file, null, message, { cause: e });
  }
}
