// Channel selection from a header's signal list (pure): which signals are analysed, their stored
// names and units. Label forms from EDF+ 2003 §2.1.3.7 ("EEG Fpz-Cz"), derivations from the AASM
// list and 10-20 naming (see derivations.test.ts); physical dimensions as EDF files write them
// (STANDARDS.md: "uV", "µV", "mV", "V", "nV").
import { describe, expect, it } from 'vitest';
import { ChannelSelectionError, selectChannels, toMicrovolts, type SignalDescription } from '../../src/core/montage/channel-selection.ts';

const header = (labels: [string, string?][], fsHz = 256): SignalDescription[] =>
  labels.map(([label, dim], index) => ({ index, label, physicalDimension: dim ?? 'uV', fsHz }));
const BY_TYPE = { channelTypes: ['EEG'], includeChannels: [], excludeChannels: [] };

describe('selectChannels', () => {
  const clinical = header([['EEG C3-M2'], ['EEG C4-M1'], ['EEG Pz-Oz'], ['EEG Pz-M1'], ['EOG E1-M2'], ['EMG Chin1-Chin2'], ['SpO2', '%']]);

  it('takes the EEG channels, names a scalp pair by both electrodes and a mastoid derivation by its electrode', () => {
    const s = selectChannels(clinical, [], BY_TYPE);
    expect(s.map((c) => [c.index, c.name, c.montage.type, c.derivation.kind, c.derivation.referredTo])).toEqual([
      [0, 'C3', 'EEG', 'contralateral-mastoid', 'M2'],
      [1, 'C4', 'EEG', 'contralateral-mastoid', 'M1'],
      [2, 'Pz-Oz', 'EEG', 'bipolar', 'Oz'],
      [3, 'Pz', 'EEG', 'midline-mastoid', 'M1'],
    ]);
    expect(s.map((c) => c.toUv)).toEqual([1, 1, 1, 1]);
  });

  it('include and exclude lists match a label, an electrode or a stored name', () => {
    expect(selectChannels(clinical, [], { ...BY_TYPE, includeChannels: ['pz-oz', 'EOG E1-M2'] }).map((c) => c.name)).toEqual(['Pz-Oz', 'E1']);
    expect(selectChannels(clinical, [], { ...BY_TYPE, excludeChannels: ['Pz-Oz'] }).map((c) => c.name)).toEqual(['C3', 'C4', 'Pz']);
    // an electrode excludes every channel measured at it
    expect(selectChannels(clinical, [], { ...BY_TYPE, excludeChannels: ['Pz'] }).map((c) => c.name)).toEqual(['C3', 'C4']);
    expect(selectChannels(clinical, [], { ...BY_TYPE, channelTypes: ['EEG', 'EMG'] }).map((c) => c.name)).toEqual(['C3', 'C4', 'Pz-Oz', 'Pz', 'Chin1']);
  });

  it('names two derivations of one electrode by their derivations, and refuses two channels that stay alike', () => {
    expect(selectChannels(header([['EEG C3-M2'], ['EEG C3-M1'], ['EEG C4']]), [], BY_TYPE).map((c) => c.name)).toEqual(['C3-M2', 'C3-M1', 'C4']);
    expect(() => selectChannels(header([['EEG Pz-Oz'], ['Pz:Oz']]), [], BY_TYPE)).toThrow(
      'signals 1 ("EEG Pz-Oz") and 2 ("Pz:Oz") are both channel "Pz-Oz"; exclude one of them by its label',
    );
    // the very same label twice (an export that duplicated a channel): excluding by label would drop both, so say so
    expect(() => selectChannels(header([['EEG C3-M2'], ['EEG F3-M2'], ['EEG C3-M2 ']]), [], BY_TYPE)).toThrow(
      'signals 1 and 3 are both labelled "EEG C3-M2" and cannot be told apart; exclude that label to leave both out, or relabel one in the file',
    );
  });

  it('takes bare labels the positions file names as EEG (a net numbered E1 … E256), unless a prefix or BIDS says otherwise', () => {
    // without a file: E1/E2 are the AASM eye electrodes (EOG), E3 no 10-10 name (MISC)
    const net = header([['E1'], ['E2'], ['E3'], ['EOG E4'], ['Temp', 'degC']]);
    expect(() => selectChannels(net, [], BY_TYPE)).toThrow('no channel selected (types EEG)');
    const onFile = new Set(['E1', 'E2', 'E3', 'E4', 'TEMP']);
    const s = selectChannels(net, [{ name: 'E2', type: 'EOG' }], BY_TYPE, onFile);
    expect(s.map((c) => [c.name, c.montage.type])).toEqual([
      ['E1', 'EEG'],
      ['E3', 'EEG'],
    ]);
  });

  it('a BIDS channels row overrides the type and leaves bad channels out', () => {
    const s = selectChannels(
      header([['C3'], ['C4'], ['Fp1']]),
      [
        { name: 'C4', status: 'bad' },
        { name: 'Fp1', type: 'eog' },
      ],
      BY_TYPE,
    );
    expect(s.map((c) => c.name)).toEqual(['C3']);
  });

  it('scales voltage units to µV and refuses other units and rates, naming the field', () => {
    expect(
      selectChannels(
        header([
          ['EEG C3', 'mV'],
          ['EEG C4', 'µV'],
          ['EEG O1', ''],
        ]),
        [],
        BY_TYPE,
      ).map((c) => c.toUv),
    ).toEqual([1000, 1, 1]);
    const err = (() => {
      try {
        selectChannels(header([['SpO2', '%']]), [], { ...BY_TYPE, includeChannels: ['SpO2'] });
      } catch (e) {
        return e as ChannelSelectionError;
      }
    })();
    expect(err).toBeInstanceOf(ChannelSelectionError);
    expect([err!.field, err!.message]).toEqual(['physical dimension', 'channel "SpO2" has unit "%", not a voltage']);
    expect(() => selectChannels(header([['EEG C3']], 0), [], BY_TYPE)).toThrow('channel "EEG C3" has sampling rate 0 Hz');
    expect(() => selectChannels(header([['EOG E1']]), [], BY_TYPE)).toThrow('no channel selected (types EEG)');
  });

  it('toMicrovolts: µV, uV, empty → 1; mV → 1000; V → 10⁶; nV → 10⁻³; others null', () => {
    expect(['µV', 'μV', 'uV', 'UV', '', 'mV', 'V', 'nV', '%', 'bpm'].map(toMicrovolts)).toEqual([1, 1, 1, 1, 1, 1e3, 1e6, 1e-3, null, null]);
  });
});
