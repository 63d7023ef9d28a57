/**
 * Lights off and lights on: from EDF+ annotations (texts matched case- and white-space-insensitively
 * against configurable lists; no standard spelling exists) or from the cohort table's `lights_off`
 * and `lights_on` columns. Rules of ours (README, Formats):
 *  - per end, the cohort table wins over annotations; the source says which were used
 *    ('table', 'annotation', 'table+annotation', or 'none': the scoring window stands in);
 *  - of several lights-off annotations the first counts, of several lights-on the last
 *    ('lights-repeated' warning);
 *  - a table clock time is the occurrence nearest the recording start for lights off (within
 *    12 h either side) and the first one after lights off (or after the recording start) for
 *    lights on;
 *  - a time outside the recording is moved to its start or end ('lights-outside' warning);
 *  - lights on not after lights off (the scoring window standing in for a missing end): both
 *    are dropped ('lights-order' warning).
 * Annotations are named by their onset only.
 */
import { normalizeLabel } from '../../src/core/hypnogram/labels.ts';
import type { LightsCell } from '../cohort/types.ts';
import type { EdfAnnotation } from './annotations.ts';
import type { Hypnogram, ScoringWarning } from './types.ts';

export interface LightsTexts {
  off: readonly string[];
  on: readonly string[];
}

export const DEFAULT_LIGHTS_TEXTS: LightsTexts = { off: ['Lights off', 'Lights out'], on: ['Lights on'] };

/** Onsets of lights annotations, s. */
export interface LightsMarks {
  off: number[];
  on: number[];
}

export interface Lights {
  /** s from the recording start; null: not found (the scoring window stands in). */
  offS: number | null;
  onS: number | null;
  source: 'table' | 'annotation' | 'table+annotation' | 'none';
}

/** Takes the texts that mark lights off or on out of the annotations; returns the rest and the marks' onsets. */
export function takeLights(annotations: readonly EdfAnnotation[], texts: LightsTexts): { rest: EdfAnnotation[]; marks: LightsMarks } {
  const off = new Set(texts.off.map(normalizeLabel));
  const on = new Set(texts.on.map(normalizeLabel));
  const marks: LightsMarks = { off: [], on: [] };
  const rest: EdfAnnotation[] = [];
  for (const a of annotations) {
    const kept = a.texts.filter((t) => {
      const key = normalizeLabel(t);
      if (off.has(key)) marks.off.push(a.onsetS);
      else if (on.has(key)) marks.on.push(a.onsetS);
      else return true;
      return false;
    });
    if (kept.length) rest.push(kept.length === a.texts.length ? a : { ...a, texts: kept });
  }
  return { rest, marks };
}

const DAY_S = 86_400;
const mod = (x: number, m: number) => ((x % m) + m) % m;
const fmt = (s: number) => String(Math.round(s * 1000) / 1000);

/**
 * Lights off/on in s from the recording start. `startClockS` is the recording start in seconds
 * after local midnight (sub-second part included); `hyp` gives the recording length in epochs
 * and the scoring window that stands in for a missing end.
 */
export function resolveLights(
  marks: LightsMarks,
  table: { off: LightsCell | null; on: LightsCell | null } | undefined,
  startClockS: number,
  durationS: number,
  hyp: Hypnogram,
): { lights: Lights; warnings: ScoringWarning[] } {
  const warnings: ScoringWarning[] = [];
  const warn = (kind: string, message: string) => warnings.push({ kind, epochs: [], message });
  const sorted = { off: [...marks.off].sort((a, b) => a - b), on: [...marks.on].sort((a, b) => a - b) };
  if (sorted.off.length > 1)
    warn('lights-repeated', `${sorted.off.length} lights-off annotations (at ${sorted.off.map(fmt).join(', ')} s): the first is taken`);
  if (sorted.on.length > 1) warn('lights-repeated', `${sorted.on.length} lights-on annotations (at ${sorted.on.map(fmt).join(', ')} s): the last is taken`);

  // lights off: a clock time's occurrence nearest the recording start (−12 h … +12 h)
  const tableOff = table?.off ? ('fromStartS' in table.off ? table.off.fromStartS : mod(table.off.clockS - startClockS + DAY_S / 2, DAY_S) - DAY_S / 2) : null;
  let offS: number | null = tableOff ?? sorted.off[0] ?? null;
  // lights on: a clock time's first occurrence after lights off (or after the recording start)
  const base = offS ?? 0;
  const tableOn = table?.on ? ('fromStartS' in table.on ? table.on.fromStartS : base + mod(table.on.clockS - startClockS - base, DAY_S)) : null;
  let onS: number | null = tableOn ?? sorted.on[sorted.on.length - 1] ?? null;
  const from = [
    tableOff !== null || tableOn !== null ? 'table' : '',
    (tableOff === null && offS !== null) || (tableOn === null && onS !== null) ? 'annotation' : '',
  ].filter(Boolean);

  const clamp = (name: string, t: number | null) => {
    if (t === null || (t >= 0 && t <= durationS)) return t;
    const to = t < 0 ? 0 : durationS;
    warn(
      'lights-outside',
      `${name} at ${fmt(t)} s is ${t < 0 ? 'before the recording start' : `after the recording end (${fmt(durationS)} s)`}: the recording ${t < 0 ? 'start' : 'end'} is taken`,
    );
    return to;
  };
  offS = clamp('lights off', offS);
  onS = clamp('lights on', onS);

  // the scoring window (first to last scored epoch) stands in for a missing end
  const scored = hyp.stages.flatMap((s, k) => (s === 'unscored' ? [] : [k]));
  const standOff = scored.length ? scored[0] * hyp.epochS : 0;
  const standOn = scored.length ? (scored[scored.length - 1] + 1) * hyp.epochS : 0;
  if ((offS !== null || onS !== null) && !((onS ?? standOn) > (offS ?? standOff))) {
    warn(
      'lights-order',
      `lights on (${fmt(onS ?? standOn)} s${onS === null ? ', end of scoring' : ''}) is not after lights off (${fmt(offS ?? standOff)} s${offS === null ? ', start of scoring' : ''}): lights times ignored, the scoring window stands in`,
    );
    return { lights: { offS: null, onS: null, source: 'none' }, warnings };
  }
  return { lights: { offS, onS, source: from.length ? (from.join('+') as Lights['source']) : 'none' }, warnings };
}
