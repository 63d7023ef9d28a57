/**
 * The warnings of one recording (warnings table) from what the reader, the scoring and the
 * channel selection noticed, and the recording status they add up to.
 *
 * A message never quotes EDF annotation text or header identification (they can hold names): it
 * names header fields, channels, epochs and times. Scoring notes are rewritten from their kind
 * and epochs for that reason (the hypnogram's own messages quote the labels).
 */
import type { EdfFile } from '../edf/reader.ts';
import type { Hypnogram } from '../hypnogram/index.ts';
import { describeEpochs } from '../hypnogram/types.ts';
import type { WarningRow } from '../store/bundle.ts';
import type { Selected } from './channels.ts';

/**
 * What recordings.status says (documented in ingest/store/schema.ts and the README):
 * ok — read whole, nothing noted; ok-with-warnings — complete, with warnings (a converted unit, a
 * band a slow channel cannot reach, …); partial-scoring — part of the night has no usable stage
 * (scoring starts late, ends early, has gaps or unknown labels); partial-data — part of the signal
 * is missing (EDF+D gaps, a truncated last data record); partial-data-and-scoring — both.
 */
export type RecordingStatus = 'ok' | 'ok-with-warnings' | 'partial-scoring' | 'partial-data' | 'partial-data-and-scoring';

/**
 * The EDF reader's header notes as { field, message }. Adapter: the reader keeps them as strings
 * in edf.header.warnings today and is moving to EdfFile.warnings in this very shape; then this
 * body becomes `return edf.warnings`.
 */
export function edfHeaderWarnings(edf: EdfFile): { field: string; message: string }[] {
  return edf.header.warnings.map((message) => {
    const named = /^header field "([^"]+)"/.exec(message);
    const field = named ? named[1]
      : /^signal \d+ is labelled|without an "EDF Annotations" signal/.test(message) ? 'label'
      : /number of data records/.test(message) ? 'number of data records'
      : /data record/.test(message) ? 'data records'
      : 'header';
    return { field, message };
  });
}

/** A reader note that means signal is missing: the last data record cut short. */
const TRUNCATED = /last data record is incomplete|after the last complete data record/;

/** Header notes (step open) and EDF+D gaps (step read). */
export function readWarnings(edf: EdfFile): WarningRow[] {
  const out: WarningRow[] = edfHeaderWarnings(edf).map((w) => ({ step: 'open', ...w }));
  if (edf.gaps.length > 0) {
    const totalS = edf.gaps.reduce((s, g) => s + (g.endS - g.startS), 0);
    const n = edf.gaps.length;
    out.push({ step: 'read', field: 'data records', message: `${n} gap${n > 1 ? 's' : ''} between data records (EDF+D), ${round(totalS)} s in all; epochs touching a gap are dropped` });
  }
  return out;
}

/** The hypnogram's notes, by kind and epochs only (never the label or annotation text). */
export function scoringWarnings(hyp: Hypnogram, nEpochs: number): WarningRow[] {
  return hyp.warnings.map((w) => {
    const n = w.epochs.length;
    const where = n > 0 ? describeEpochs(w.epochs, hyp.epochS) : 'no epoch';
    let message: string;
    if (w.kind === 'gap') {
      const late = w.epochs.includes(0);
      const early = nEpochs > 0 && w.epochs.includes(nEpochs - 1);
      const what = late && early ? 'scoring starts late and ends early' : late ? 'scoring starts late' : early ? 'scoring ends early' : 'scoring has gaps';
      message = `${what}: ${where} without a stage, stored as unscored`;
    } else if (w.kind === 'unknown-label') message = `labels that are not stages at ${where}, stored as unscored`;
    else if (w.kind === 'ignored-events') message = `${n} annotation${n === 1 ? '' : 's'} ignored (not a stage label) at ${where}`;
    else if (w.kind === 'truncated') message = `the stage of the partial last epoch (${where}) is dropped`;
    else message = `${w.kind} at ${where}`;
    return { step: 'scoring', field: w.kind, message };
  });
}

/** Channels whose samples were scaled to µV, or whose unit was empty and taken as µV. */
export function unitWarnings(selected: readonly Selected[]): WarningRow[] {
  const out: WarningRow[] = [];
  for (const s of selected) {
    const unit = s.signal.physicalDimension.trim();
    if (unit === '') out.push({ step: 'channels', field: 'physical dimension', message: `channel ${s.name}: no physical dimension, taken as µV` });
    else if (s.toUv !== 1) out.push({ step: 'channels', field: 'physical dimension', message: `channel ${s.name}: recorded in ${unit}, samples and physical limits scaled ×${s.toUv} to µV` });
  }
  return out;
}

/** The status a recording's warnings and dropped epochs add up to. */
export function recordingStatus(edf: EdfFile, hyp: Hypnogram, warnings: readonly WarningRow[]): RecordingStatus {
  const data = edf.gaps.length > 0 || edfHeaderWarnings(edf).some((w) => TRUNCATED.test(w.message));
  const scoring = hyp.warnings.some((w) => w.kind === 'gap' || w.kind === 'unknown-label');
  if (data && scoring) return 'partial-data-and-scoring';
  if (data) return 'partial-data';
  if (scoring) return 'partial-scoring';
  return warnings.length > 0 ? 'ok-with-warnings' : 'ok';
}

function round(s: number): number {
  return Math.round(s * 1000) / 1000;
}
