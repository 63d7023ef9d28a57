/**
 * Which signals of a recording are analysed, and under what names (pure, no I/O).
 *
 * Input: the header's signal descriptions, the BIDS `_channels.tsv` rows (if any) and the
 * include / exclude / type options. Output: one SelectedChannel per analysed signal, with its
 * stored name, type, derivation (src/core/montage/labels.ts) and the factor to µV.
 * Rules:
 *  - a BIDS row's type overrides the label's; status `bad` leaves the channel out;
 *  - with an include list, the channels it names (by label, electrode or stored name) whatever
 *    their type; else the channels of the selected types; the exclude list then leaves out
 *    the channels it names the same way;
 *  - names: the electrode (C3, also for C3-M2 and C3-REF); both electrodes of a scalp-to-scalp
 *    EEG derivation (Pz-Oz); two channels with one name (C3-M2 and C3-M1) are both named by
 *    their derivation; two channels that still share a name are an error naming both signals
 *    (the same label twice cannot be told apart: the message says so).
 */
import { classifyDerivation, derivationName, microvoltsPer, parseChannelLabel, type Derivation } from './labels.ts';
import type { MontageChannel } from './reference.ts';

/** One signal of a recording's header, as selection needs it. */
export interface SignalDescription {
  /** Position of the signal in the file's header. */
  index: number;
  label: string;
  physicalDimension: string;
  /** Sampling rate, Hz. */
  fsHz: number;
}

/** One row of a BIDS `_channels.tsv` (name, and type and status when given). */
export interface BidsChannelRow {
  name: string;
  type?: string | null;
  status?: string | null;
}

export interface SelectionOptions {
  /** Types selected when no include list is given (e.g. ['EEG']). */
  channelTypes: readonly string[];
  /** Labels, electrodes or stored names to take whatever their type (empty: by type). */
  includeChannels: readonly string[];
  /** Labels, electrodes or stored names to leave out. */
  excludeChannels: readonly string[];
}

export interface SelectedChannel {
  /** Position of the signal in the file's header. */
  index: number;
  /** Stored channel name (C3, Pz-Oz). */
  name: string;
  /** What the reference planner needs (type after BIDS, electrode, reference, fs). */
  montage: MontageChannel;
  /** What the label says the channel is recorded against (classifyDerivation). */
  derivation: Derivation;
  /** Factor from the file's physical unit to µV. */
  toUv: number;
}

/** A selection that cannot be made; `field` names the header field at fault. */
export class ChannelSelectionError extends Error {
  override name = 'ChannelSelectionError';
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
  }
}

/** Multiplier from a physical dimension to µV, or null when it is not a voltage. Empty → µV (assumed). */
export const toMicrovolts = microvoltsPer;

const named = (list: readonly string[], ...names: string[]) => {
  const wanted = new Set(names.map((n) => n.trim().toUpperCase()));
  return list.some((x) => wanted.has(x.trim().toUpperCase()));
};

/** A label that starts with a type word (EEG C3, EOG E1): its type is the label's own (labels.ts). */
const TYPE_PREFIX = /^\s*(EEG|EOG|EMG|ECG|EKG|RESP|MISC)([\s_]|$)/i;

/**
 * The analysed channels. `onPositionsFile` (upper-case electrode names of the recording's
 * positions file): a label without a type word whose electrode the file names, in a voltage
 * unit, is EEG (a net numbered E1 … E256, whose E1/E2 are not the AASM eye electrodes).
 */
export function selectChannels(
  signals: readonly SignalDescription[],
  bidsChannels: readonly BidsChannelRow[],
  options: SelectionOptions,
  onPositionsFile: ReadonlySet<string> = new Set(),
): SelectedChannel[] {
  const bids = new Map(bidsChannels.map((c) => [c.name.trim().toUpperCase(), c]));
  const out: SelectedChannel[] = [];
  for (const s of signals) {
    const parsed = parseChannelLabel(s.label, s.physicalDimension);
    const b = bids.get(s.label.trim().toUpperCase());
    // BIDS _channels.tsv: its type overrides the label's; status 'bad' leaves the channel out
    const placed = !TYPE_PREFIX.test(s.label) && toMicrovolts(s.physicalDimension) !== null && onPositionsFile.has(parsed.electrode.trim().toUpperCase());
    const type = b?.type ? b.type.toUpperCase() : placed ? 'EEG' : parsed.type;
    if (b?.status === 'bad') continue;
    const derivation = classifyDerivation(parsed.electrode, parsed.reference);
    // a pair of scalp sites is named as a pair only on an EEG channel (an EMG "C3-C4" keeps its electrode name)
    const name = type === 'EEG' ? derivationName(parsed.electrode, derivation) : parsed.electrode;
    const wanted = options.includeChannels.length > 0 ? named(options.includeChannels, s.label, parsed.electrode, name) : options.channelTypes.includes(type);
    if (!wanted || named(options.excludeChannels, s.label, parsed.electrode, name)) continue;
    const toUv = toMicrovolts(s.physicalDimension);
    if (toUv === null) throw new ChannelSelectionError('physical dimension', `channel "${s.label}" has unit "${s.physicalDimension}", not a voltage`);
    if (!(s.fsHz > 0)) throw new ChannelSelectionError('samples per record', `channel "${s.label}" has sampling rate ${s.fsHz} Hz`);
    out.push({ index: s.index, name, montage: { ...parsed, type, fsHz: s.fsHz }, derivation, toUv });
  }
  if (out.length === 0) {
    throw new ChannelSelectionError(
      'label',
      `no channel selected (types ${options.channelTypes.join(', ')}${options.includeChannels.length ? `, include ${options.includeChannels.join(', ')}` : ''})`,
    );
  }
  // Two channels with the same name (e.g. C3-M2 and C3-M1): name both by the derivation.
  const count = new Map<string, number>();
  for (const c of out) count.set(c.name, (count.get(c.name) ?? 0) + 1);
  for (const c of out) if (count.get(c.name)! > 1 && c.montage.reference) c.name = `${c.montage.electrode}-${c.montage.reference}`;
  const seen = new Map<string, SelectedChannel>();
  for (const c of out) {
    const first = seen.get(c.name);
    if (first) {
      const [a, b] = [first, c].map((x) => signals.find((s) => s.index === x.index)!.label.trim());
      const which = `signals ${first.index + 1} and ${c.index + 1}`;
      throw new ChannelSelectionError(
        'label',
        a === b
          ? `${which} are both labelled "${a}" and cannot be told apart; exclude that label to leave both out, or relabel one in the file`
          : `signals ${first.index + 1} ("${a}") and ${c.index + 1} ("${b}") are both channel "${c.name}"; exclude one of them by its label`,
      );
    }
    seen.set(c.name, c);
  }
  return out;
}
