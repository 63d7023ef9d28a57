// Channel-label parsing. Electrode names and capitalisation from the 10-20/10-10 system (ACNS
// guideline 2016: Fp1, Cz, T7; old T3–T6 kept; mastoids M1/M2, earlobes A1/A2); label form
// "Type Sensor" with derivations such as "EEG Fpz-Cz" from EDF+ 2003 §2.1.3.7 (EDF+ texts).
import { describe, expect, it } from 'vitest';
import { canonicalElectrode, parseChannelLabel } from '../../src/core/montage/labels.ts';

describe('parseChannelLabel', () => {
  it.each([
    ['EEG C3-M2', 'EEG', 'C3', 'M2'],
    ['C4:A1', 'EEG', 'C4', 'A1'],
    ['Fp1-Ref', 'EEG', 'Fp1', 'Ref'],
    ['EOG LOC', 'EOG', 'LOC', null],
    ['EMG chin', 'EMG', 'chin', null],
    ['ECG II', 'ECG', 'II', null],
    ['EKG', 'ECG', 'EKG', null],
    ['EEG Fpz-Cz', 'EEG', 'Fpz', 'Cz'], // EDF+ 2003 example label
    ['FP1', 'EEG', 'Fp1', null],
    ['CZ', 'EEG', 'Cz', null],
    ['eeg fp2-m1', 'EEG', 'Fp2', 'M1'],
    ['T3-A2', 'EEG', 'T3', 'A2'],
    ['E1-M2', 'EOG', 'E1', 'M2'], // AASM eye electrode name (common practice)
    ['Chin1-Chin2', 'EMG', 'Chin1', 'Chin2'],
    ['Thorax', 'RESP', 'Thorax', null],
    ['SaO2', 'MISC', 'SaO2', null],
    ['  O2-M1  ', 'EEG', 'O2', 'M1'],
    // a type word with a number or a bracket straight after it, as some cohort exports name channels (common practice)
    ['EEG(sec)', 'EEG', 'EEG(sec)', null],
    ['EEG2', 'EEG', 'EEG2', null],
    ['ECG2', 'ECG', 'ECG2', null],
    ['EKG1', 'ECG', 'EKG1', null],
    ['EOG(L)', 'EOG', 'EOG(L)', null],
    ['EMG(chin)', 'EMG', 'EMG(chin)', null],
  ])('%s → %s %s %s', (label, type, electrode, reference) => {
    expect(parseChannelLabel(label)).toEqual({ raw: label, type, electrode, reference });
  });

  it('the physical dimension decides for prefix-less labels: a non-voltage unit is MISC', () => {
    expect(parseChannelLabel('Cz', 'uV').type).toBe('EEG');
    expect(parseChannelLabel('Cz', 'µV').type).toBe('EEG');
    // units in any case, as exports write them (toMicrovolts reads them so): still a voltage
    for (const unit of ['uv', 'UV', 'µv', 'mv']) expect(parseChannelLabel('Cz', unit).type).toBe('EEG');
    expect(parseChannelLabel('Cz', 'MV').type).toBe('MISC'); // megavolts: no EEG by name alone
    expect(parseChannelLabel('Cz', '%').type).toBe('MISC');
    expect(parseChannelLabel('Pulse', 'bpm').type).toBe('MISC');
    expect(parseChannelLabel('EEG Cz', 'degC').type).toBe('EEG'); // an explicit prefix wins
  });
});

describe('canonicalElectrode', () => {
  it('10-10 capitalisation', () => {
    expect(['FP1', 'fpz', 'CZ', 'af3', 'FC1', 'cpz', 'PO8', 'OZ', 'IZ', 'NZ', 'ft10', 'tp9'].map(canonicalElectrode)).toEqual([
      'Fp1',
      'Fpz',
      'Cz',
      'AF3',
      'FC1',
      'CPz',
      'PO8',
      'Oz',
      'Iz',
      'Nz',
      'FT10',
      'TP9',
    ]);
  });
  it('mastoids, earlobes and old temporal names are recognised as given', () => {
    expect(['m1', 'M2', 'a1', 'A2', 'T3', 't4', 'T5', 'T6', 'T7', 'P8'].map(canonicalElectrode)).toEqual([
      'M1',
      'M2',
      'A1',
      'A2',
      'T3',
      'T4',
      'T5',
      'T6',
      'T7',
      'P8',
    ]);
  });
  it('non-names give null', () => {
    expect(['Ref', 'LOC', 'C7', 'Fp3', 'Mz', 'Az', 'X1', '', 'EEG'].map(canonicalElectrode)).toEqual([null, null, null, null, null, null, null, null, null]);
  });
});
