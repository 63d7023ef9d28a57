/** Channel selection of one recording (src/core/montage/channel-selection.ts) on the EDF's signals. */
import { ChannelSelectionError, selectChannels as selectChannelList } from '../../src/core/montage/channel-selection.ts';
import type { MontageChannel } from '../../src/core/montage/reference.ts';
import type { CohortRecording } from '../cohort/types.ts';
import type { EdfFile, EdfSignal } from '../edf/reader.ts';
import { PipelineError } from './error.ts';
import type { IngestParams } from './params.ts';

export interface Selected {
  signal: EdfSignal;
  montage: MontageChannel;
  name: string;
  toUv: number;
}

/** The analysed signals and their stored names; a selection that fails is the recording's 'channels' step error. */
export function selectChannels(edf: EdfFile, rec: CohortRecording, params: IngestParams): Selected[] {
  const signals = edf.header.signals.filter((s) => !s.isAnnotation);
  let chosen;
  try {
    chosen = selectChannelList(signals, rec.bids?.channels ?? [], params);
  } catch (e) {
    if (e instanceof ChannelSelectionError) throw new PipelineError('channels', edf.file, e.field, e.message, { cause: e });
    throw e;
  }
  const out: Selected[] = [];
  for (const c of chosen) out.push({ signal: signals.find((s) => s.index === c.index)!, montage: c.montage, name: c.name, toUv: c.toUv });
  return out;
}
