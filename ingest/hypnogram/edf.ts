/**
 * Scoring from the EDF+ (or BDF+) annotations of a file: the recording itself, or a separate
 * annotation file placed on its recording by absolute time.
 *
 * EDF+ (Kemp & Olivan 2003): annotation onsets count from the file's header start time; the file
 * itself starts at that time plus the time-keeping onset of its first data record, where the
 * epoch grid begins. For a separate file, shift = (annotation file start) − (recording start)
 * is added to every onset. Rules of ours (README, Formats):
 *  - starts more than a day apart, or no stage annotation inside the recording after the shift:
 *    refused ('start-times'), naming both start times (dates and times only);
 *  - stage onsets less than 1 s off the recording's epoch grid (EDF header clocks keep whole
 *    seconds, so two writers of one night can differ by a fraction): moved onto the grid with a
 *    'scoring-shift-snapped' warning; 1 s or more: refused ('shift-off-grid');
 *  - an annotation-only file (no ordinary signal) says nothing about the length of a recording:
 *    read on its own, its scoring ends with its last scored epoch.
 * EDF read errors (EdfFormatError, EdfIoError) pass through.
 */
import path from 'node:path';
import { stageFromLabel } from '../../src/core/hypnogram/labels.ts';
import { openEdf } from '../edf/reader.ts';
import type { EdfFile } from '../edf/reader.ts';
import { scoringFromAnnotations, type EdfAnnotation } from './annotations.ts';
import { edfStartSeconds, formatClock } from './clock.ts';
import { checkLabelMap } from './epochs.ts';
import { takeLights, type LightsMarks, type LightsTexts } from './lights.ts';
import type { Hypnogram, ScoringOptions, ScoringProblem, ScoringWarning } from './types.ts';
import { ScoringError, resolveEpochS } from './types.ts';

/** The recording a separate annotation file scores: its start (clock.ts seconds) and length, s. */
export interface RecordingPlace {
  startS: number;
  durationS: number;
}

export interface EdfScoringOptions extends ScoringOptions {
  /** The recording these annotations score when they come from a separate file. Without it the file scores itself. */
  recording?: RecordingPlace;
  /** Annotation texts that mark lights off and on: taken out of the scoring and returned as marks. */
  lightsTexts?: LightsTexts;
}

export interface EdfScoring {
  hypnogram: Hypnogram;
  /** Seconds added to onsets counted from the annotation file's own start to place them on the recording. */
  shiftS: number;
  /** Lights annotations, s from the recording start. */
  lights: LightsMarks;
}

/** Below this the difference between two clocks is within the 1-s resolution of EDF header times. */
const SNAP_BELOW_S = 1;
const TOL_S = 1e-4;
const DAY_S = 86_400;

export async function readScoringEdf(file: string, options: EdfScoringOptions = {}): Promise<Hypnogram> {
  const edf = await openEdf(file);
  try {
    return scoringFromOpenEdf(edf, options).hypnogram;
  } finally {
    await edf.close();
  }
}

const secondsText = (s: number) => String(Math.round(s * 1e4) / 1e4);

/** The same from an EDF file already open (the recording being ingested, or its scoring file); does not close it. */
export function scoringFromOpenEdf(edf: EdfFile, options: EdfScoringOptions = {}): EdfScoring {
  const epochS = resolveEpochS(options, edf.file);
  checkLabelMap(options.labelMap, edf.file);
  const fileStartS = edfStartSeconds(edf);
  // onsets from the file's own start (its first record), as the epoch grid counts them
  const t0 = edf.recordOnsetsS.length ? edf.recordOnsetsS[0] : 0;
  const own: EdfAnnotation[] = edf.annotations.map((a) => ({ ...a, onsetS: a.onsetS - t0 }));
  const { rest, marks } = options.lightsTexts ? takeLights(own, options.lightsTexts) : { rest: own, marks: { off: [], on: [] } };

  const rec = options.recording;
  const hasSignals = edf.header.signals.some((s) => !s.isAnnotation);
  const recordingDurationS = rec ? rec.durationS : options.recordingDurationS !== undefined ? options.recordingDurationS : hasSignals ? edf.durationS : null;
  let shiftS = rec ? fileStartS - rec.startS : 0;
  const starts = rec ? `scoring file ${formatClock(fileStartS)}, recording ${formatClock(rec.startS)}` : '';
  const what = rec
    ? `the scoring starts ${secondsText(Math.abs(shiftS))} s ${shiftS >= 0 ? 'after' : 'before'} the recording (${starts})`
    : 'the stage annotations of the recording';
  const problems: ScoringProblem[] = [];
  const warnings: ScoringWarning[] = [];
  const refuse = (reason: string) =>
    problems.push({ kind: 'start-times', epochs: [], message: `the scoring file and the recording cannot belong together (${starts}): ${reason}` });

  const stages = rest.filter((a) => a.texts.some((t) => stageFromLabel(t.trim(), options.labelMap) !== undefined));
  if (rec && Math.abs(shiftS) > DAY_S) refuse('their starts are more than a day apart');
  else if (stages.length) {
    // how far the first stage onset lies off the recording's epoch grid
    const first = Math.min(...stages.map((a) => a.onsetS)) + shiftS;
    const offGrid = first - Math.round(first / epochS) * epochS;
    if (Math.abs(offGrid) >= SNAP_BELOW_S) {
      problems.push({
        kind: 'shift-off-grid',
        epochs: [],
        message: `${what}: ${secondsText(Math.abs(offGrid))} s off the ${epochS}-s epoch grid of the recording (counted from its first sample), so no scored epoch matches a recorded one`,
      });
    } else if (Math.abs(offGrid) > TOL_S) {
      shiftS -= offGrid;
      warnings.push({
        kind: 'scoring-shift-snapped',
        epochs: [],
        message: `${what}: ${secondsText(Math.abs(offGrid))} s off the ${epochS}-s epoch grid, below the 1-s resolution of EDF header clocks; moved onto the grid (shift ${secondsText(shiftS)} s)`,
      });
    }
    const inside = (a: EdfAnnotation) => a.onsetS + shiftS < (recordingDurationS ?? Infinity) && a.onsetS + shiftS + (a.durationS ?? epochS) > 0;
    if (rec && problems.length === 0 && !stages.some(inside)) refuse(`no scored epoch lies inside the recording (0–${secondsText(rec.durationS)} s)`);
  }
  if (problems.length) throw new ScoringError(edf.file, problems);

  const placed = rest.map((a) => ({ ...a, onsetS: a.onsetS + shiftS }));
  const hypnogram = scoringFromAnnotations(placed, edf.file, `annotations:${path.basename(edf.file)}`, { ...options, recordingDurationS });
  hypnogram.warnings.unshift(...warnings);
  return { hypnogram, shiftS, lights: { off: marks.off.map((t) => t + shiftS), on: marks.on.map((t) => t + shiftS) } };
}
