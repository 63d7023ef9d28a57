/**
 * The scoring of one recording as ingest uses it: the hypnogram from a separate scoring file or
 * from the recording's own EDF+ annotations, the shift that placed it on the recording, and
 * lights off/on (from the annotations of both files and the cohort table; lights.ts).
 *
 * A separate scoring file ending in .edf or .bdf is an EDF+/BDF+ annotation file placed by
 * absolute time (edf.ts); a table or text file has no clock of its own and is laid on the
 * recording start (shift null).
 */
import path from 'node:path';
import type { LabelMap } from '../../src/core/hypnogram/labels.ts';
import type { CohortRecording } from '../cohort/types.ts';
import { openEdf, type EdfFile } from '../edf/reader.ts';
import { edfStartSeconds } from './clock.ts';
import { scoringFromOpenEdf } from './edf.ts';
import { DEFAULT_LIGHTS_TEXTS, resolveLights, takeLights, type Lights, type LightsMarks } from './lights.ts';
import { readScoring } from './read.ts';
import type { Hypnogram } from './types.ts';

/** The scoring parameters of a run (part of runs.parameters: they change results). */
export interface ScoringParams {
  /** Extra label → stage entries (from a label-map file); they take precedence over the built-in labels. */
  labelMap: LabelMap;
  /** 'error' (default): an unknown stage label refuses the recording; 'unscored': it scores the epochs as unscored, with a warning. */
  unknownAs: 'error' | 'unscored';
  /** Drop scored stages before the recording start or past its end (with a warning) instead of refusing the recording. */
  trimScoredOutside: boolean;
  /** Annotation texts that mark lights off / lights on (matched ignoring case and white space). */
  lightsOffTexts: string[];
  lightsOnTexts: string[];
}

export const DEFAULT_SCORING_PARAMS: Readonly<ScoringParams> = {
  labelMap: {},
  unknownAs: 'error',
  trimScoredOutside: false,
  lightsOffTexts: [...DEFAULT_LIGHTS_TEXTS.off],
  lightsOnTexts: [...DEFAULT_LIGHTS_TEXTS.on],
};

export interface RecordingScoring {
  hypnogram: Hypnogram;
  /** Seconds added to the scoring's onsets (counted from its own file's start) to place them on the recording; null for a table or text file. */
  shiftS: number | null;
  lights: Lights;
}

const ANNOTATION_FILES = ['.edf', '.bdf'];

export async function scoringForRecording(edf: EdfFile, rec: CohortRecording, params: ScoringParams & { epochS: number }): Promise<RecordingScoring> {
  const options = { epochS: params.epochS, labelMap: params.labelMap, unknownAs: params.unknownAs, trimScoredOutside: params.trimScoredOutside };
  const lightsTexts = { off: params.lightsOffTexts, on: params.lightsOnTexts };
  const startS = edfStartSeconds(edf);
  let hypnogram: Hypnogram;
  let shiftS: number | null;
  let marks: LightsMarks;
  if (rec.scoringPath === null) {
    ({ hypnogram, shiftS, lights: marks } = scoringFromOpenEdf(edf, { ...options, lightsTexts }));
  } else {
    // the recording's own lights annotations count as well as the scoring file's
    const t0 = edf.recordOnsetsS.length ? edf.recordOnsetsS[0] : 0;
    marks = takeLights(
      edf.annotations.map((a) => ({ ...a, onsetS: a.onsetS - t0 })),
      lightsTexts,
    ).marks;
    if (ANNOTATION_FILES.includes(path.extname(rec.scoringPath).toLowerCase())) {
      const file = await openEdf(rec.scoringPath);
      try {
        const r = scoringFromOpenEdf(file, { ...options, lightsTexts, recording: { startS, durationS: edf.durationS } });
        ({ hypnogram, shiftS } = r);
        marks = { off: [...marks.off, ...r.lights.off], on: [...marks.on, ...r.lights.on] };
      } finally {
        await file.close();
      }
    } else {
      hypnogram = await readScoring(rec.scoringPath, { ...options, recordingDurationS: edf.durationS });
      shiftS = null;
    }
  }
  const startClockS = ((startS % 86_400) + 86_400) % 86_400;
  const { lights, warnings } = resolveLights(marks, rec.lights, startClockS, edf.durationS, hypnogram);
  hypnogram.warnings.push(...warnings);
  return { hypnogram, shiftS, lights };
}
