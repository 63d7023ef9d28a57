/**
 * Individual bands: a band centred on each subject's own fitted peak instead of fixed edges
 * (common practice for rhythms whose frequency differs between people, e.g. spindles and alpha;
 * the rule below is ours).
 *
 * Rule: per subject and condition (stage, session), over the contrast's channels, take each
 * channel's highest fitted peak (the stored peaks table) centred in the search range (default:
 * the band's own edges); the subject's centre is the median of those channels' centres (channels
 * without such a peak do not count). The individual band is centre ± the half-width (default:
 * half the band's width). A subject with no fitted peak in the search range on any channel keeps
 * the fixed band, with a note. Every subject's centre is listed in the result.
 */
import type { Band } from '../spectrum/bands.ts';
import type { Stage } from '../stages.ts';
import { contrastConditions } from './conditions.ts';
import type { ContrastData, PeakRow } from './data.ts';
import type { Contrast } from './spec.ts';

/** The search range and half-width a contrast gives a band (defaults above). */
export function individualRule(c: Pick<Contrast, 'peakSearchHz' | 'halfWidthHz'>, band: Band): { searchHz: [number, number]; halfWidthHz: number } {
  return {
    searchHz: c.peakSearchHz ? [c.peakSearchHz[0], c.peakSearchHz[1]] : [band.loHz, band.hiHz],
    halfWidthHz: c.halfWidthHz ?? (band.hiHz - band.loHz) / 2,
  };
}

/** One subject's band in one condition. */
export interface IndividualCentre {
  subject: string;
  /** the condition (stage, or "session S" of a paired sessions design) */
  condition: string;
  /** the band as given (its fixed edges) */
  band: string;
  searchHz: [number, number];
  /** median centre of the channels' highest fitted peaks in the search range, Hz; null: none, the fixed band is used */
  centerHz: number | null;
  /** channels with a fitted peak in the search range */
  channelsWithPeak: number;
  /** the edges used, Hz */
  loHz: number;
  hiHz: number;
  note: string | null;
}

function median(values: number[]): number {
  const v = [...values].sort((a, b) => a - b);
  const m = v.length >> 1;
  return v.length % 2 === 1 ? v[m] : (v[m - 1] + v[m]) / 2;
}

/**
 * The individual band of one subject and condition from its peaks (already only this subject,
 * session and stage), over the given channels.
 */
export function individualBand(
  band: Band,
  rule: { searchHz: [number, number]; halfWidthHz: number },
  peaks: readonly PeakRow[],
  channels: readonly string[],
  who: { subject: string; condition: string; stage: Stage },
): { band: Band; centre: IndividualCentre } {
  const [slo, shi] = rule.searchHz;
  const centres: number[] = [];
  for (const ch of channels) {
    let best: PeakRow | null = null;
    for (const p of peaks) if (p.channel === ch && p.centerHz >= slo && p.centerHz <= shi && (!best || p.height > best.height)) best = p;
    if (best) centres.push(best.centerHz);
  }
  const base = { subject: who.subject, condition: who.condition, band: band.name, searchHz: [slo, shi] as [number, number], channelsWithPeak: centres.length };
  if (centres.length === 0) {
    return {
      band,
      centre: {
        ...base,
        centerHz: null,
        loHz: band.loHz,
        hiHz: band.hiHz,
        note: `no fitted peak in ${slo}–${shi} Hz on any channel: the fixed band ${band.loHz}–${band.hiHz} Hz is used`,
      },
    };
  }
  const centerHz = median(centres);
  const lo = Math.max(0, centerHz - rule.halfWidthHz);
  const hi = centerHz + rule.halfWidthHz;
  return { band: { name: band.name, loHz: lo, hiHz: hi }, centre: { ...base, centerHz, loHz: lo, hiHz: hi, note: null } };
}

/** Each subject's band per condition (in contrastConditions order), and every centre found. */
export interface SubjectBands {
  /** subject → band per condition (the fixed band where the subject has no peak, or no such condition) */
  bands: Map<string, Band[]>;
  centres: IndividualCentre[];
}

/**
 * The individual band of every subject of the data in each of the contrast's conditions, over the
 * contrast's channels (all channels stored for the condition's stage when 'all'). A subject's
 * session is the condition's, else its only one (a subject with several and none named is skipped:
 * the contrast refuses it anyway).
 */
export function individualBands(c: Contrast, data: ContrastData, band: Band): SubjectBands {
  const conds = contrastConditions(c);
  const rule = individualRule(c, band);
  const sessions = new Map<string, Set<string | null>>();
  for (const r of data.spectra.rows) {
    if (!sessions.has(r.subject)) sessions.set(r.subject, new Set());
    sessions.get(r.subject)!.add(r.session);
  }
  const peaksOf = new Map<string, PeakRow[]>();
  for (const p of data.peaks) {
    const k = `${p.subject}\u0000${p.session ?? ''}\u0000${p.stage}`;
    if (!peaksOf.has(k)) peaksOf.set(k, []);
    peaksOf.get(k)!.push(p);
  }
  const channelsOf = (stage: Stage) =>
    c.channels === 'all' ? [...new Set(data.spectra.rows.filter((r) => r.stage === stage).map((r) => r.channel))] : c.channels;
  const bands = new Map<string, Band[]>();
  const centres: IndividualCentre[] = [];
  for (const subject of [...sessions.keys()].sort()) {
    const own = sessions.get(subject)!;
    const per: Band[] = [];
    for (const cond of conds) {
      const session = cond.session ?? (own.size === 1 ? (own.values().next().value ?? null) : undefined);
      if (session === undefined) {
        per.push(band);
        continue;
      }
      const found = individualBand(band, rule, peaksOf.get(`${subject}\u0000${session ?? ''}\u0000${cond.stage}`) ?? [], channelsOf(cond.stage), {
        subject,
        condition: cond.name,
        stage: cond.stage,
      });
      per.push(found.band);
      centres.push(found.centre);
    }
    bands.set(subject, per);
  }
  return { bands, centres };
}
