/**
 * Every subject's measure over channels × points, whatever its group: the rows `bandwise
 * deviation` scores. The same rules as a contrast's assembly (src/core/contrast/assemble.ts):
 * a subject is left out, with the reason, when excluded in the quality screen (whole, or one of
 * the channels), when a channel's spectrum is missing or flagged, or when the measure cannot be
 * computed; a subject with several sessions needs the session named; 'recorded' spectra of one
 * channel recorded against different references are not pooled.
 */
import type { Contrast } from '../contrast/spec.ts';
import type { AperiodicRow, ContrastData, Exclusion, PeakRow, SpectrumRow } from '../contrast/data.ts';
import { ContrastDataError } from '../contrast/assemble.ts';
import { measureLayout, measureValues, type MeasureLayout } from '../contrast/measure.ts';
import { mixedRecordedReferences } from '../contrast/recorded-references.ts';

export interface SubjectMatrix {
  channels: string[];
  /** point frequencies, Hz (band measures: band centres; aperiodic measures: 0) */
  freqsHz: number[];
  layout: MeasureLayout;
  /** the subjects scored, in row order, with their value of the group column (null: none) */
  subjects: { subject: string; group: string | null }[];
  /** subjects × (channels × points), row-major, channel-major points */
  data: Float64Array;
  excluded: Exclusion[];
}

const key = (subject: string, session: string | null, channel: string) => `${subject}\u0000${session ?? ''}\u0000${channel}`;

export function subjectMatrix(c: Contrast, data: ContrastData): SubjectMatrix {
  const axis = data.spectra;
  const layout = measureLayout(c, axis);
  const rows = data.spectra.rows.filter((r) => r.stage === c.stage);
  const spectra = new Map<string, SpectrumRow>();
  const sessionsOf = new Map<string, Set<string | null>>();
  for (const r of rows) {
    spectra.set(key(r.subject, r.session, r.channel), r);
    if (!sessionsOf.has(r.subject)) sessionsOf.set(r.subject, new Set());
    sessionsOf.get(r.subject)!.add(r.session);
  }
  const aperiodic = new Map<string, AperiodicRow>();
  for (const a of data.aperiodic) if (a.stage === c.stage) aperiodic.set(key(a.subject, a.session, a.channel), a);
  const peaks = new Map<string, PeakRow[]>();
  for (const p of data.peaks) {
    if (p.stage !== c.stage) continue;
    const k = key(p.subject, p.session, p.channel);
    if (!peaks.has(k)) peaks.set(k, []);
    peaks.get(k)!.push(p);
  }
  const stored = [...new Set(rows.map((r) => r.channel))];
  const channels = c.channels === 'all' ? stored : c.channels;
  if (channels.length === 0) throw new ContrastDataError(`no stored spectra for stage ${c.stage}, reference ${c.reference}, averaging ${c.averaging}`);
  for (const ch of channels)
    if (!stored.includes(ch)) throw new ContrastDataError(`channel ${ch} has no stored ${c.stage} spectra for reference ${c.reference}`);

  const participants = new Map(data.participants.map((p) => [String(p.subject), p]));
  const own = new Map<string, Exclusion[]>();
  for (const e of data.exclusions) {
    if (!own.has(e.subject)) own.set(e.subject, []);
    own.get(e.subject)!.push(e);
  }
  const P = layout.freqsHz.length;
  const width = channels.length * P;
  const subjects = [...sessionsOf.keys()].sort();
  const matrix = new Float64Array(subjects.length * width);
  const kept: { subject: string; group: string | null; session: string | null }[] = [];
  const excluded: Exclusion[] = [];
  const scratch = new Float64Array(P);
  for (const subject of subjects) {
    const list = own.get(subject) ?? [];
    const hit = list.find((e) => e.channel === null) ?? list.find((e) => e.channel !== null && channels.includes(e.channel));
    if (hit) {
      excluded.push({ subject, channel: hit.channel, reason: `excluded in the quality screen: ${hit.reason}` });
      continue;
    }
    const sessions = sessionsOf.get(subject)!;
    if (c.session === undefined && sessions.size > 1)
      throw new ContrastDataError(`subject ${subject} has several sessions (${[...sessions].join(', ')}): say which one with "session"`);
    const session = c.session ?? sessions.values().next().value ?? null;
    const values = matrix.subarray(kept.length * width, (kept.length + 1) * width);
    let reason: Exclusion | null = null;
    for (let ci = 0; ci < channels.length && !reason; ci++) {
      const ch = channels[ci];
      const k = key(subject, session, ch);
      const row = spectra.get(k);
      if (!row) {
        reason = { subject, channel: ch, reason: `no ${c.stage} spectrum for ${ch}${c.session !== undefined ? ` in session ${c.session}` : ''}` };
        break;
      }
      if (row.flagged) {
        reason = { subject, channel: ch, reason: `${c.stage} spectrum of ${ch} flagged: ${row.flagReason ?? 'flagged at ingest'}` };
        break;
      }
      const why = measureValues(c, layout, axis, row.power, aperiodic.get(k), peaks.get(k) ?? [], scratch);
      if (why) {
        reason = { subject, channel: ch, reason: `${c.stage}, ${ch}: ${why}` };
        break;
      }
      for (let j = 0; j < P; j++) {
        if (!Number.isFinite(scratch[j])) {
          reason = { subject, channel: ch, reason: `${c.stage}, ${ch}: measure is not finite at ${layout.freqsHz[j]} Hz` };
          break;
        }
        values[ci * P + j] = scratch[j];
      }
    }
    if (reason) {
      excluded.push(reason);
      continue;
    }
    const g = participants.get(subject)?.[c.groupColumn];
    kept.push({ subject, group: g === null || g === undefined ? null : String(g), session });
  }
  if (c.reference === 'recorded' && data.recordedReferences) {
    const mixed = mixedRecordedReferences(channels, kept, data.recordedReferences);
    if (mixed) throw new ContrastDataError(mixed);
  }
  return {
    channels: [...channels],
    freqsHz: layout.freqsHz,
    layout,
    subjects: kept.map(({ subject, group }) => ({ subject, group })),
    data: matrix.slice(0, kept.length * width),
    excluded,
  };
}
