/**
 * Where a recording's channels sit (src/core/montage/channel-placement.ts): from the recording's
 * positions file, else the 10-10 template, else nowhere; with a warning for what the file did not
 * give (notes on its frame, EEG channels it does not name) and for EEG channels left without a
 * position, which a spatial contrast can then only join through a neighbour table.
 */
import { headLayout, placeChannel, type ChannelPlacement } from '../../src/core/montage/channel-placement.ts';
import type { ElectrodeLayout } from '../../src/core/montage/electrodes-file.ts';
import type { WarningRow } from '../store/bundle.ts';
import type { Selected } from './channels.ts';

const list = (names: readonly string[]) => (names.length <= 12 ? names.join(', ') : `${names.slice(0, 12).join(', ')}, … (${names.length} in all)`);

export function placeChannels(selected: readonly Selected[], layout: ElectrodeLayout | undefined): { placements: ChannelPlacement[]; warnings: WarningRow[] } {
  const head = layout ? headLayout(layout) : null;
  const placements = selected.map((s) => placeChannel(s.name, s.montage.electrode ?? s.name, head));
  const warnings: WarningRow[] = (head?.notes ?? []).map((message) => ({ step: 'channels', field: 'positions', message }));
  const eeg = (source: ChannelPlacement['source']) => selected.filter((s, i) => s.montage.type === 'EEG' && placements[i].source === source).map((s) => s.name);
  if (layout) {
    const template = eeg('template');
    if (template.length > 0)
      warnings.push({
        step: 'channels',
        field: 'positions',
        message: `channels ${list(template)} are not in ${layout.file}: their 10-10 template positions are used`,
      });
  }
  const none = eeg('none');
  if (none.length > 0) {
    const why = layout ? `not in ${layout.file} and not 10-10 names` : 'no positions file and not 10-10 names';
    warnings.push({
      step: 'channels',
      field: 'positions',
      message: `channels ${list(none)} have no position (${why}); spatial contrasts over them need a neighbour table`,
    });
  }
  return { placements, warnings };
}
