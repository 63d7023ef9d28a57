/**
 * Stage intervals (onset, duration, label) → one stage per epoch, with every irregularity either
 * stopping the scoring (ScoringError) or written down as a warning naming the epochs.
 *
 * Rules (our own, documented in the report):
 *  - onsets must lie on the epoch grid (k · epochS from the recording start), else error;
 *  - a duration must be a whole number of epochs, except when the interval ends exactly at the
 *    recording end; a missing duration means one epoch;
 *  - an epoch covered by two intervals is an overlap: error naming the epochs and both labels;
 *  - epochs covered by no interval are 'unscored', reported as a gap warning;
 *  - with a known recording length, epochs that start at or after the recording end are an error;
 *    only the partial last epoch (the recording ends inside it) is dropped, with a warning;
 *  - an unknown label is an error unless `unknownAs: 'unscored'` (then a warning);
 *  - in event-style sources (EDF+ annotations, `trial_type`/`description` columns) a text that is
 *    not a stage label and does not look like one ('Arousal', 'Lights off') is another event: it
 *    is ignored and listed in an 'ignored-events' warning.
 */
import type { Stage } from '../../src/core/stages.ts';
import { isStage } from '../../src/core/stages.ts';
import { looksLikeStageLabel, stageFromLabel } from '../../src/core/hypnogram/labels.ts';
import type { Hypnogram, ScoringOptions, ScoringProblem, ScoringWarning } from './types.ts';
import { ScoringError, describeEpochs, resolveEpochS } from './types.ts';

export interface StageInterval {
  onsetS: number;
  /** Seconds; null means one epoch. */
  durationS: number | null;
  label: string;
  /** Where it came from, for messages: 'row 4', 'annotation at 120 s'. */
  where: string;
}

export interface IntervalContext {
  /** The scoring file, named in errors. */
  file: string;
  /** Hypnogram.source. */
  source: string;
  /** Texts that are not stage labels are other events (ignored with a warning) instead of unknown labels. */
  eventStyle: boolean;
}

/** Times closer than this are equal: 100 µs, the annotation time resolution of EDFlib (common practice). */
const TOL_S = 1e-4;

/** Collects epochs under a key, keeping the first-seen description. */
class Buckets {
  readonly map = new Map<string, { epochs: number[]; detail: string }>();
  add(key: string, detail: string, epochs: number[]): void {
    const b = this.map.get(key);
    if (b) b.epochs.push(...epochs);
    else this.map.set(key, { epochs: [...epochs], detail });
  }
}

function listSome(items: string[], max = 3): string {
  return items.slice(0, max).join(', ') + (items.length > max ? ` and ${items.length - max} more` : '');
}

export function hypnogramFromIntervals(intervals: readonly StageInterval[], ctx: IntervalContext, options: ScoringOptions = {}): Hypnogram {
  const epochS = resolveEpochS(options, ctx.file);
  const problems: ScoringProblem[] = [];
  const warnings: ScoringWarning[] = [];
  const say = (epochs: number[]) => describeEpochs(epochs, epochS);

  for (const [label, stage] of Object.entries(options.labelMap ?? {})) {
    if (!isStage(stage)) problems.push({ kind: 'label-map', epochs: [], message: `label map: '${label}' maps to '${String(stage)}', which is not one of W, N1, N2, N3, R, unscored` });
  }
  if (problems.length) throw new ScoringError(ctx.file, problems);

  const recDur = options.recordingDurationS ?? null;
  if (recDur !== null && !(recDur >= 0 && Number.isFinite(recDur))) {
    throw new ScoringError(ctx.file, [{ kind: 'recording-duration', epochs: [], message: `recording duration must be a non-negative number of seconds, got ${recDur}` }]);
  }
  const nFull = recDur === null ? Infinity : Math.floor((recDur + TOL_S) / epochS);
  const hasPartial = recDur !== null && recDur - nFull * epochS > TOL_S;

  const sorted = [...intervals].sort((a, b) => a.onsetS - b.onsetS);
  const owner = new Map<number, { label: string; where: string; stage: Stage }>();
  const ignored = new Buckets();
  const unknown = new Buckets();
  const overlaps = new Buckets();
  const pastEnd = new Buckets();
  const truncated = new Buckets();
  let stageIntervals = 0;

  for (const iv of sorted) {
    const what = `'${iv.label}' (${iv.where})`;
    if (!Number.isFinite(iv.onsetS) || iv.onsetS < 0) {
      problems.push({ kind: 'onset', epochs: [], message: `${what}: onset ${iv.onsetS} s is not a time at or after the recording start` });
      continue;
    }
    const firstEpoch = Math.floor((iv.onsetS + TOL_S) / epochS);
    let stage = stageFromLabel(iv.label, options.labelMap);
    if (stage === undefined) {
      if (ctx.eventStyle && !looksLikeStageLabel(iv.label)) {
        ignored.add(iv.label, iv.label, [firstEpoch]);
        continue;
      }
      if (iv.label.trim() === '') {
        problems.push({ kind: 'empty-label', epochs: [firstEpoch], message: `empty stage label (${iv.where}) at ${say([firstEpoch])}` });
        continue;
      }
      unknown.add(iv.label, iv.where, [firstEpoch]);
      if ((options.unknownAs ?? 'error') === 'error') continue;
      stage = 'unscored';
    }
    stageIntervals++;

    const k0 = Math.round(iv.onsetS / epochS);
    if (Math.abs(k0 * epochS - iv.onsetS) > TOL_S) {
      problems.push({ kind: 'off-grid', epochs: [firstEpoch], message: `${what}: onset ${iv.onsetS} s is not on the ${epochS}-s epoch grid (inside ${say([firstEpoch])})` });
      continue;
    }
    const durS = iv.durationS ?? epochS;
    if (!Number.isFinite(durS) || durS <= 0) {
      problems.push({ kind: 'duration', epochs: [k0], message: `${what}: duration ${durS} s at ${say([k0])} is not a positive number of seconds` });
      continue;
    }
    const nEpochs = durS / epochS;
    let count = Math.round(nEpochs);
    if (Math.abs(count - nEpochs) > TOL_S / epochS) {
      const endsAtRecordingEnd = recDur !== null && Math.abs(iv.onsetS + durS - recDur) <= TOL_S;
      if (!endsAtRecordingEnd) {
        problems.push({ kind: 'duration-off-grid', epochs: [k0], message: `${what}: duration ${durS} s from ${say([k0])} is not a whole number of ${epochS}-s epochs` });
        continue;
      }
      count = Math.ceil(nEpochs);
    }

    for (let k = k0; k < k0 + count; k++) {
      if (k >= nFull) {
        if (k === nFull && hasPartial) truncated.add(what, what, [k]);
        else pastEnd.add(what, what, [k]);
        continue;
      }
      const prev = owner.get(k);
      if (prev) {
        overlaps.add(`${prev.where}\u0000${iv.where}`, `'${prev.label}' (${prev.where}) and ${what}`, [k]);
        continue;
      }
      owner.set(k, { label: iv.label, where: iv.where, stage });
    }
  }

  for (const [label, b] of unknown.map) {
    const message = `unknown stage label '${label}' (${b.detail}${b.epochs.length > 1 ? ' and others' : ''}) at ${say(b.epochs)}`;
    if ((options.unknownAs ?? 'error') === 'error') {
      problems.push({ kind: 'unknown-label', epochs: b.epochs, message: `${message}; add it to the label map or pass unknownAs: 'unscored'` });
    } else {
      warnings.push({ kind: 'unknown-label', epochs: b.epochs, message: `${message} scored as unscored` });
    }
  }
  for (const b of overlaps.map.values()) {
    problems.push({ kind: 'overlap', epochs: b.epochs, message: `overlapping scoring at ${say(b.epochs)}: ${b.detail}` });
  }
  if (pastEnd.map.size) {
    const epochs = [...pastEnd.map.values()].flatMap((b) => b.epochs);
    problems.push({ kind: 'past-end', epochs, message: `scoring runs past the recording end (${recDur} s) at ${say(epochs)}: ${listSome([...pastEnd.map.keys()])}` });
  }
  if (problems.length === 0 && stageIntervals === 0) {
    problems.push({ kind: 'no-stages', epochs: [], message: `no sleep-stage labels found${ignored.map.size ? ` (only other events: ${[...ignored.map.keys()].map((t) => `'${t}'`).join(', ')})` : ''}` });
  }
  if (problems.length) throw new ScoringError(ctx.file, problems);

  if (truncated.map.size) {
    const epochs = [nFull];
    warnings.push({ kind: 'truncated', epochs, message: `${listSome([...truncated.map.keys()])} reaches past the recording end (${recDur} s): the partial last ${say(epochs)} is dropped` });
  }
  for (const [text, b] of ignored.map) {
    warnings.push({ kind: 'ignored-events', epochs: b.epochs, message: `'${text}' is not a stage label: ${b.epochs.length} event(s) ignored at ${say(b.epochs)}` });
  }

  let length = nFull;
  if (recDur === null) {
    length = 0;
    for (const k of owner.keys()) length = Math.max(length, k + 1);
  }
  const stages: Stage[] = new Array<Stage>(length);
  const gaps: number[] = [];
  for (let k = 0; k < length; k++) {
    const o = owner.get(k);
    if (o) stages[k] = o.stage;
    else {
      stages[k] = 'unscored';
      gaps.push(k);
    }
  }
  if (gaps.length) warnings.push({ kind: 'gap', epochs: gaps, message: `no scoring for ${say(gaps)}: set to unscored` });

  return { epochS, stages, source: ctx.source, warnings };
}
