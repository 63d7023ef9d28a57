/**
 * What an analysis sees while a split exists: the rows of one part's subjects only, with the
 * blinded column coded while exploring. Applied to the rows a contrast reads (ContrastData) the
 * same way by the command line and the dashboard.
 */
import type { ContrastData } from '../contrast/data.ts';
import type { Contrast } from '../contrast/spec.ts';
import { blindRows, requireCodedGroups, type Blinding } from './blinding.ts';
import type { Part } from './split.ts';
import type { SplitStamp } from './stamp.ts';

/** One part of the current split, as an analysis sees it. */
export interface PartView {
  split: SplitStamp;
  part: Part;
  /** the part's subjects */
  subjects: ReadonlySet<string>;
  /** the coding of the groups while exploring blinded; null: the groups are shown */
  blinding: Blinding | null;
}

/** The rows of the part's subjects (all rows when there is no split). */
export function keepSubjects<T extends { subject: string }>(rows: readonly T[], view: PartView | null): T[] {
  return view === null ? [...rows] : rows.filter((r) => view.subjects.has(r.subject));
}

/** The participants rows of the part's subjects, the blinded column coded. */
export function partParticipants<R extends Record<string, string | number | boolean | null>>(rows: readonly R[], view: PartView | null): R[] {
  if (view === null) return [...rows];
  const own = rows.filter((p) => view.subjects.has(String(p.subject)));
  return view.blinding ? blindRows(own, view.blinding) : own;
}

/** The contrast's rows restricted to the part, the blinded column coded; refuses real group names while blinded. */
export function partData(c: Contrast, data: ContrastData, view: PartView | null): ContrastData {
  if (view === null) return data;
  requireCodedGroups(c, view.blinding);
  return {
    ...data,
    spectra: { ...data.spectra, rows: keepSubjects(data.spectra.rows, view) },
    aperiodic: keepSubjects(data.aperiodic, view),
    peaks: keepSubjects(data.peaks, view),
    participants: partParticipants(data.participants, view),
    recordedReferences: data.recordedReferences && keepSubjects(data.recordedReferences, view),
  };
}
