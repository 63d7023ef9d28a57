/**
 * Stage intervals (onset, duration, label) → one stage per epoch, with every irregularity either
 * stopping the scoring (ScoringError) or written down as a warning naming the epochs.
 *
 * Rules (our own, documented in the report):
 *  - onsets must lie on the epoch grid (k · epochS from the recording start), else error;
 *  - a duration must be a whole number of epochs, except when the interval ends exactly at the
 *    recording end; a missing duration means one epoch;
 *  - an unscored label ('Sleep stage ?', 'Movement time') off the grid, of a part-epoch length
 *    or of 0 s is no error: it covers the whole epochs inside it (maybe none), with one
 *    'unscored-not-whole-epochs' warning naming such labels;
 *  - an epoch covered by two intervals is an overlap: error naming the epochs and both labels;
 *  - epochs covered by no interval are 'unscored', reported by where they lie: before the first
 *    scored epoch ('scoring-starts-late'), after the last ('scoring-ends-early') or between
 *    ('gap'); any of them makes the hypnogram `partial`;
 *  - epochs before the recording start (negative onsets, after alignment) or, with a known
 *    recording length, starting at or after its end: unscored labels there are dropped with a
 *    'trimmed-unscored' warning; scored stages there are an error (likely misalignment) unless
 *    `trimScoredOutside` (then dropped with a 'trimmed-scored' warning); only the partial last
 *    epoch (the recording ends inside it) is always dropped, with a 'truncated' warning;
 *  - an unknown label is an error unless `unknownAs: 'unscored'` (then a warning);
 *  - in event-style sources (EDF+ annotations, `trial_type`/`description` columns) a text that is
 *    not a stage label and does not look like one is another event: it is ignored and listed in
 *    an 'ignored-events' warning;
 *  - messages name texts that are not stage labels by a short hash only (names.ts).
 */
import type { Stage } from '../../src/core/stages.ts';
import { isStage } from '../../src/core/stages.ts';
import { looksLikeStageLabel, stageFromLabel, type LabelMap } from '../../src/core/hypnogram/labels.ts';
import { nameOfLabel, textHash } from './names.ts';
import type { Hypnogram, ScoringOptions, ScoringProblem, ScoringWarning } from './types.ts';
import { ScoringError, describeEpochs, resolveEpochS } from './types.ts';

export interface StageInterval {
  onsetS: number;
  /** Seconds; null means one epoch. */
  durationS: number | null;
  label: string;
  /** Where it came from, for messages: 'row 4', 'annotation at 120 s' (never its text). */
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

const unique = (epochs: number[]) => [...new Set(epochs)].sort((a, b) => a - b);
const seconds = (s: number) => String(Math.round(s * 1000) / 1000);

/** Throws a ScoringError naming every entry of a label map that maps to something that is not a stage. */
export function checkLabelMap(labelMap: LabelMap | undefined, file: string): void {
  const problems: ScoringProblem[] = [];
  for (const [label, stage] of Object.entries(labelMap ?? {})) {
    if (!isStage(stage))
      problems.push({
        kind: 'label-map',
        epochs: [],
        message: `label map: '${label}' maps to '${String(stage)}', which is not one of W, N1, N2, N3, R, unscored`,
      });
  }
  if (problems.length) throw new ScoringError(file, problems);
}

export function hypnogramFromIntervals(intervals: readonly StageInterval[], ctx: IntervalContext, options: ScoringOptions = {}): Hypnogram {
  const epochS = resolveEpochS(options, ctx.file);
  const problems: ScoringProblem[] = [];
  const warnings: ScoringWarning[] = [];
  const say = (epochs: number[]) => describeEpochs(epochs, epochS);
  const labelMap = options.labelMap;

  checkLabelMap(labelMap, ctx.file);
  const name = (label: string) => nameOfLabel(label, labelMap);

  const recDur = options.recordingDurationS ?? null;
  if (recDur !== null && !(recDur >= 0 && Number.isFinite(recDur))) {
    throw new ScoringError(ctx.file, [
      { kind: 'recording-duration', epochs: [], message: `recording duration must be a non-negative number of seconds, got ${recDur}` },
    ]);
  }
  const nFull = recDur === null ? Infinity : Math.floor((recDur + TOL_S) / epochS);
  const hasPartial = recDur !== null && recDur - nFull * epochS > TOL_S;

  const sorted = [...intervals].sort((a, b) => a.onsetS - b.onsetS);
  const owner = new Map<number, { label: string; where: string; stage: Stage }>();
  const ignored = new Buckets();
  const unknown = new Buckets();
  const overlaps = new Buckets();
  const scoredBefore = new Buckets();
  const scoredPast = new Buckets();
  const unscoredBefore = new Buckets();
  const unscoredPast = new Buckets();
  const truncated = new Buckets();
  const notWhole = new Buckets();
  let stageIntervals = 0;

  for (const iv of sorted) {
    const what = `${name(iv.label)} (${iv.where})`;
    if (!Number.isFinite(iv.onsetS)) {
      problems.push({ kind: 'onset', epochs: [], message: `${what}: onset ${iv.onsetS} s is not a number of seconds` });
      continue;
    }
    const firstEpoch = Math.floor((iv.onsetS + TOL_S) / epochS);
    let stage = stageFromLabel(iv.label, labelMap);
    const labelledUnscored = stage === 'unscored'; // '?', movement time (not an unknown label scored as unscored)
    if (stage === undefined) {
      if (ctx.eventStyle && !looksLikeStageLabel(iv.label)) {
        ignored.add(textHash(iv.label), seconds(iv.onsetS), [firstEpoch]);
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
    const durS = iv.durationS ?? epochS;
    const onGrid = Math.abs(k0 * epochS - iv.onsetS) <= TOL_S;
    const whole = Math.abs(Math.round(durS / epochS) - durS / epochS) <= TOL_S / epochS;
    const endsAtRecordingEnd = recDur !== null && Math.abs(iv.onsetS + durS - recDur) <= TOL_S;
    let from = k0;
    let count = Math.round(durS / epochS);
    if (labelledUnscored && Number.isFinite(durS) && durS >= 0 && !(onGrid && durS > 0 && (whole || endsAtRecordingEnd))) {
      // an unscored label off the grid, of a part-epoch length or of 0 s: the whole epochs inside it (ours; unscored is what an epoch without scoring is anyway)
      from = Math.ceil((iv.onsetS - TOL_S) / epochS);
      count = Math.max(0, Math.floor((iv.onsetS + durS + TOL_S) / epochS) - from);
      notWhole.add(what, what, [firstEpoch]);
    } else {
      if (!onGrid) {
        problems.push({
          kind: 'off-grid',
          epochs: [firstEpoch],
          message: `${what}: onset ${iv.onsetS} s is not on the ${epochS}-s epoch grid (inside ${say([firstEpoch])})`,
        });
        continue;
      }
      if (!Number.isFinite(durS) || durS <= 0) {
        problems.push({ kind: 'duration', epochs: [k0], message: `${what}: duration ${durS} s at ${say([k0])} is not a positive number of seconds` });
        continue;
      }
      if (!whole) {
        if (!endsAtRecordingEnd) {
          problems.push({
            kind: 'duration-off-grid',
            epochs: [k0],
            message: `${what}: duration ${durS} s from ${say([k0])} is not a whole number of ${epochS}-s epochs`,
          });
          continue;
        }
        count = Math.ceil(durS / epochS);
      }
    }

    for (let k = from; k < from + count; k++) {
      if (k < 0) {
        (stage === 'unscored' ? unscoredBefore : scoredBefore).add(what, what, [k]);
        continue;
      }
      if (k >= nFull) {
        if (k === nFull && hasPartial) truncated.add(what, what, [k]);
        else (stage === 'unscored' ? unscoredPast : scoredPast).add(what, what, [k]);
        continue;
      }
      const prev = owner.get(k);
      if (prev) {
        overlaps.add(`${prev.where}\u0000${iv.where}`, `${name(prev.label)} (${prev.where}) and ${what}`, [k]);
        continue;
      }
      owner.set(k, { label: iv.label, where: iv.where, stage });
    }
  }

  for (const [label, b] of unknown.map) {
    const message = `unknown stage label (${textHash(label)}, ${b.detail}${b.epochs.length > 1 ? ' and others' : ''}) at ${say(b.epochs)}`;
    if ((options.unknownAs ?? 'error') === 'error') {
      problems.push({
        kind: 'unknown-label',
        epochs: b.epochs,
        message: `${message}; add it to a label map (--label-map) or score unknown labels as unscored (--unknown-as-unscored)`,
      });
    } else {
      warnings.push({ kind: 'unknown-label', epochs: b.epochs, message: `${message} scored as unscored` });
    }
  }
  for (const b of overlaps.map.values()) {
    problems.push({ kind: 'overlap', epochs: b.epochs, message: `overlapping scoring at ${say(b.epochs)}: ${b.detail}` });
  }
  const misaligned = 'likely misaligned: check the scoring file, or drop them with --trim-scoring';
  const outside = (b: Buckets, unscored: boolean, before: boolean) => {
    const epochs = unique([...b.map.values()].flatMap((x) => x.epochs));
    const where = before ? `before the recording start (${seconds(epochs[0] * epochS)} to 0 s)` : `past the recording end (${recDur} s)`;
    const at = before ? '' : ` at ${say(epochs)}`;
    const what = listSome([...b.map.keys()]);
    return {
      epochs,
      trimmed: `${epochs.length} ${unscored ? 'unscored' : 'scored'} epoch(s) ${where} trimmed${at}: ${what}`,
      refused: before ? `${epochs.length} scored epoch(s) ${where}: ${what}; ${misaligned}` : `scoring runs ${where}${at}: ${what}; ${misaligned}`,
    };
  };
  for (const [b, before] of [
    [scoredBefore, true],
    [scoredPast, false],
  ] as const) {
    if (b.map.size === 0) continue;
    const o = outside(b, false, before);
    if (options.trimScoredOutside) warnings.push({ kind: 'trimmed-scored', epochs: o.epochs, message: o.trimmed });
    else problems.push({ kind: before ? 'before-start' : 'past-end', epochs: o.epochs, message: o.refused });
  }
  if (problems.length === 0 && stageIntervals === 0) {
    const events = [...ignored.map.values()].reduce((n, b) => n + b.epochs.length, 0);
    problems.push({
      kind: 'no-stages',
      epochs: [],
      message: `no sleep-stage labels found${ignored.map.size ? ` (only other events: ${events} event(s), ${ignored.map.size} distinct text(s))` : ''}`,
    });
  }
  if (problems.length === 0 && recDur !== null && owner.size === 0) {
    problems.push({ kind: 'no-overlap', epochs: [], message: `no scoring inside the recording (0–${recDur} s)` });
  }
  if (problems.length) throw new ScoringError(ctx.file, problems);

  if (truncated.map.size) {
    const epochs = [nFull];
    warnings.push({
      kind: 'truncated',
      epochs,
      message: `${listSome([...truncated.map.keys()])} reaches past the recording end (${recDur} s): the partial last ${say(epochs)} is dropped`,
    });
  }
  for (const [b, before] of [
    [unscoredBefore, true],
    [unscoredPast, false],
  ] as const) {
    if (b.map.size) {
      const o = outside(b, true, before);
      warnings.push({ kind: 'trimmed-unscored', epochs: o.epochs, message: o.trimmed });
    }
  }
  if (notWhole.map.size) {
    const epochs = unique([...notWhole.map.values()].flatMap((b) => b.epochs));
    const names = [...notWhole.map.keys()];
    warnings.push({
      kind: 'unscored-not-whole-epochs',
      epochs,
      message: `${names.length} unscored label(s) whose duration is not a whole number of ${epochS}-s epochs taken over the whole epochs inside them: ${names.slice(0, 8).join(', ')}${names.length > 8 ? ` and ${names.length - 8} more` : ''}`,
    });
  }
  for (const [hash, b] of ignored.map) {
    const epochs = unique(b.epochs);
    warnings.push({
      kind: 'ignored-events',
      epochs,
      message: `${hash} (not a stage label): ${b.epochs.length} event(s) ignored at ${say(epochs)}, first at ${b.detail} s`,
    });
  }

  let length = nFull;
  if (recDur === null) {
    length = 0;
    for (const k of owner.keys()) length = Math.max(length, k + 1);
  }
  const stages: Stage[] = new Array<Stage>(length);
  let firstOwned = -1;
  let lastOwned = -1;
  for (let k = 0; k < length; k++) {
    const o = owner.get(k);
    stages[k] = o ? o.stage : 'unscored';
    if (o) {
      if (firstOwned < 0) firstOwned = k;
      lastOwned = k;
    }
  }
  const late: number[] = [];
  const gaps: number[] = [];
  const early: number[] = [];
  for (let k = 0; k < length; k++) {
    if (owner.has(k)) continue;
    (k < firstOwned ? late : k > lastOwned ? early : gaps).push(k);
  }
  if (late.length)
    warnings.push({
      kind: 'scoring-starts-late',
      epochs: late,
      message: `scoring starts late: no scoring for ${say(late)} before the first scored epoch; set to unscored`,
    });
  if (gaps.length) warnings.push({ kind: 'gap', epochs: gaps, message: `no scoring for ${say(gaps)}: set to unscored` });
  if (early.length)
    warnings.push({
      kind: 'scoring-ends-early',
      epochs: early,
      message: `scoring ends early: no scoring for ${say(early)} after the last scored epoch; set to unscored`,
    });

  return { epochS, stages, source: ctx.source, warnings, partial: late.length + gaps.length + early.length > 0 };
}
