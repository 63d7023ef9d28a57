/** Opening a recording's EDF, hashing the file in the same reads. */
import type { CohortRecording } from '../cohort/types.ts';
import { openEdf, type EdfFile } from '../edf/reader.ts';
import { PipelineError } from './error.ts';

/** A recording's EDF, open, with the SHA-256 of its file. */
export interface OpenedRecording {
  edf: EdfFile;
  sha256: string;
}

/** Opens a recording's EDF and hashes the file in the same reads as its annotations where it can. */
export async function openRecording(rec: CohortRecording): Promise<OpenedRecording> {
  let edf: EdfFile;
  try {
    edf = await openEdf(rec.recordingPath, { sha256: true });
  } catch (e) {
    throw new PipelineError('open', rec.recordingPath, (e as { field?: string }).field ?? null, e instanceof Error ? e.message : String(e), { cause: e });
  }
  return { edf, sha256: edf.sha256 as string };
}
