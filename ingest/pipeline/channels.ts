/** Channel selection of one recording (by type, include/exclude lists, BIDS _channels.tsv) and the scale of each unit to µV. */
import { parseChannelLabel } from '../../src/core/montage/labels.ts';
import type { MontageChannel } from '../../src/core/montage/reference.ts';
import type { CohortRecording } from '../cohort/types.ts';
import type { EdfFile, EdfSignal } from '../edf/reader.ts';
import { PipelineError } from './error.ts';
import type { IngestParams } from './params.ts';

/** Multiplier from a physical dimension to µV, or null when it is not a voltage. Empty → µV (assumed). */
export function toMicrovolts(dimension: string): number | null {
  const d = dimension.trim();
  if (d === '' || /^(µ|μ|u)V$/i.test(d)) return 1;
  if (d === 'mV') return 1e3;
  if (d === 'V') return 1e6;
  if (d === 'nV') return 1e-3;
  return null;
}

export interface Selected {
  signal: EdfSignal;
  montage: MontageChannel;
  name: string;
  toUv: number;
}

const matches = (list: string[], s: EdfSignal, electrode: string) =>
  list.some((x) => x.trim().toUpperCase() === s.label.trim().toUpperCase() || x.trim().toUpperCase() === electrode.toUpperCase());

export function selectChannels(edf: EdfFile, rec: CohortRecording, params: IngestParams): Selected[] {
  const bids = new Map((rec.bids?.channels ?? []).map((c) => [c.name.trim().toUpperCase(), c]));
  const out: Selected[] = [];
  for (const s of edf.header.signals) {
    if (s.isAnnotation) continue;
    const parsed = parseChannelLabel(s.label, s.physicalDimension);
    const b = bids.get(s.label.trim().toUpperCase());
    // BIDS _channels.tsv: its type overrides the label's; status 'bad' leaves the channel out
    const type = b?.type ? b.type.toUpperCase() : parsed.type;
    if (b?.status === 'bad') continue;
    const wanted = params.includeChannels.length > 0 ? matches(params.includeChannels, s, parsed.electrode) : params.channelTypes.includes(type);
    if (!wanted || matches(params.excludeChannels, s, parsed.electrode)) continue;
    const toUv = toMicrovolts(s.physicalDimension);
    if (toUv === null) {
      throw new PipelineError('channels', edf.file, 'physical dimension', `channel "${s.label}" has unit "${s.physicalDimension}", not a voltage`);
    }
    if (!(s.fsHz > 0)) throw new PipelineError('channels', edf.file, 'samples per record', `channel "${s.label}" has sampling rate ${s.fsHz} Hz`);
    out.push({ signal: s, montage: { ...parsed, type, fsHz: s.fsHz }, name: parsed.electrode, toUv });
  }
  if (out.length === 0) {
    throw new PipelineError('channels', edf.file, 'label', `no channel selected (types ${params.channelTypes.join(', ')}${params.includeChannels.length ? `, include ${params.includeChannels.join(', ')}` : ''})`);
  }
  // Two channels with the same electrode (e.g. C3-M2 and C3-M1): name both by the derivation.
  const count = new Map<string, number>();
  for (const c of out) count.set(c.name, (count.get(c.name) ?? 0) + 1);
  for (const c of out) if (count.get(c.name)! > 1 && c.montage.reference) c.name = `${c.montage.electrode}-${c.montage.reference}`;
  const seen = new Set<string>();
  for (const c of out) {
    if (seen.has(c.name)) throw new PipelineError('channels', edf.file, 'label', `two channels are both "${c.name}"; exclude one of them`);
    seen.add(c.name);
  }
  return out;
}
