/**
 * The warnings of one recording (warnings table) from what the reader, the scoring and the
 * channel selection noticed, and the recording status they add up to.
 *
 * A message never quotes EDF annotation text or header identification (they can hold names): it
 * names header fields, channels, epochs and times (the reader and the scoring write theirs so).
 */
import type { EdfFile } from '../edf/reader.ts';
import type { Hypnogram } from '../hypnogram/index.ts';
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

/** A reader note that means signal is missing: the last data record cut short (ingest/edf/header.ts). */
const TRUNCATED = /last data record is incomplete/;

/** The reader's notes (header fields, EDF+D gaps, segment onsets; ingest/edf/reader.ts), step open. */
export function readWarnings(edf: EdfFile): WarningRow[] {
  return edf.warnings.map((w) => ({ step: 'open', field: w.field, message: w.message }));
}

/** The hypnogram's notes: their messages name epochs, times and stage labels, never other annotation text (ingest/hypnogram/names.ts). */
export function scoringWarnings(hyp: Hypnogram): WarningRow[] {
  return hyp.warnings.map((w) => ({ step: 'scoring', field: w.kind, message: w.message }));
}

/** Channels whose samples were scaled to µV, or whose unit was empty and taken as µV. */
export function unitWarnings(selected: readonly Selected[]): WarningRow[] {
  const out: WarningRow[] = [];
  for (const s of selected) {
    const unit = s.signal.physicalDimension.trim();
    if (unit === '') out.push({ step: 'channels', field: 'physical dimension', message: `channel ${s.name}: no physical dimension, taken as µV` });
    else if (s.toUv !== 1)
      out.push({
        step: 'channels',
        field: 'physical dimension',
        message: `channel ${s.name}: recorded in ${unit}, samples and physical limits scaled ×${s.toUv} to µV`,
      });
  }
  return out;
}

/** The status a recording's warnings and dropped epochs add up to. */
export function recordingStatus(edf: EdfFile, hyp: Hypnogram, warnings: readonly WarningRow[]): RecordingStatus {
  const data = edf.gaps.length > 0 || edf.warnings.some((w) => TRUNCATED.test(w.message));
  const scoring = hyp.partial || hyp.warnings.some((w) => w.kind === 'unknown-label');
  if (data && scoring) return 'partial-data-and-scoring';
  if (data) return 'partial-data';
  if (scoring) return 'partial-scoring';
  return warnings.length > 0 ? 'ok-with-warnings' : 'ok';
}
