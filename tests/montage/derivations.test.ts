// What an EEG channel label says it is recorded against. Expected values hand-derived from the
// AASM derivation list (AASM Manual for the Scoring of Sleep v2.x: F4-M1, C4-M1, O2-M1, backups
// F3-M2, C3-M2, O1-M2 — electrode against the mastoid of the other side) and 10-20/10-10 naming
// (ACNS guideline 2016: odd left, even right, z midline; mastoids M1 left, M2 right, older ear
// lobes A1/A2), as summarised in /work/shared/STANDARDS.md; label form "Type Sensor" with
// derivations such as "EEG Fpz-Cz" from EDF+ 2003 §2.1.3.7.
import { describe, expect, it } from 'vitest';
import { classifyDerivation, derivationName, parseChannelLabel, referenceKey } from '../../src/core/montage/labels.ts';

const read = (label: string) => {
  const p = parseChannelLabel(label, 'uV');
  const d = classifyDerivation(p.electrode, p.reference);
  return { type: p.type, name: derivationName(p.electrode, d), kind: d.kind, referredTo: d.referredTo };
};

describe('classifyDerivation', () => {
  it.each([
    // AASM recommended and backup derivations: contralateral mastoid
    ['EEG C3-M2', 'C3', 'contralateral-mastoid', 'M2'],
    ['C4-M1', 'C4', 'contralateral-mastoid', 'M1'],
    ['EEG F4-M1', 'F4', 'contralateral-mastoid', 'M1'],
    ['O2-M1', 'O2', 'contralateral-mastoid', 'M1'],
    ['EEG F3-M2', 'F3', 'contralateral-mastoid', 'M2'],
    ['EEG O1-M2', 'O1', 'contralateral-mastoid', 'M2'],
    // older ear-lobe names: A2 is the right ear, so C3-A2 is contralateral
    ['C3-A2', 'C3', 'contralateral-mastoid', 'A2'],
    ['T3-A2', 'T3', 'contralateral-mastoid', 'A2'], // T3: old 10-20 name of T7, left
    // separators and spelling: ':' as '-', spaces around, lower case
    ['C3:M2', 'C3', 'contralateral-mastoid', 'M2'],
    ['EEG C3-M2 ', 'C3', 'contralateral-mastoid', 'M2'],
    ['  EEG C3-M2', 'C3', 'contralateral-mastoid', 'M2'],
    ['eeg c3-m2', 'C3', 'contralateral-mastoid', 'M2'],
    ['c4-a1', 'C4', 'contralateral-mastoid', 'A1'],
    // same side: ipsilateral; midline: no side
    ['EEG C3-M1', 'C3', 'ipsilateral-mastoid', 'M1'],
    ['C4-A2', 'C4', 'ipsilateral-mastoid', 'A2'],
    ['Pz-M1', 'Pz', 'midline-mastoid', 'M1'],
    ['EEG Cz-A2', 'Cz', 'midline-mastoid', 'A2'],
    // scalp to scalp: bipolar, named by both electrodes
    ['Fpz-Cz', 'Fpz-Cz', 'bipolar', 'Cz'],
    ['Pz-Oz', 'Pz-Oz', 'bipolar', 'Oz'],
    ['EEG Fpz-Cz', 'Fpz-Cz', 'bipolar', 'Cz'], // the EDF+ 2003 example label
    ['pz-oz', 'Pz-Oz', 'bipolar', 'Oz'],
    ['EEG F3:C3', 'F3-C3', 'bipolar', 'C3'],
    // the common reference, not named
    ['C3', 'C3', 'common', null],
    ['EEG C3-REF', 'C3', 'common', null],
    ['EEG C3-Ref', 'C3', 'common', null],
    ['c3-reference', 'C3', 'common', null],
    // both mastoids / ear lobes named: linked
    ['EEG C3-M1M2', 'C3', 'linked-mastoids', 'M1+M2'],
    ['C4-M1+M2', 'C4', 'linked-mastoids', 'M1+M2'],
    ['EEG O1-A1A2', 'O1', 'linked-mastoids', 'A1+A2'],
    ['Cz-a2+a1', 'Cz', 'linked-mastoids', 'A1+A2'],
    // the average of both written out, as some exports spell it (common practice): (A1+A2)/2, with spaces too
    ['EEG C3-(A1+A2)/2', 'C3', 'linked-mastoids', 'A1+A2'],
    ['C4-(M1 + M2)/2', 'C4', 'linked-mastoids', 'M1+M2'],
    ['O2:(m2+m1)/2', 'O2', 'linked-mastoids', 'M1+M2'],
    ['EEG C3-A1 + A2', 'C3', 'linked-mastoids', 'A1+A2'],
    // not guessed: abbreviations without a standard spelling, non-scalp electrodes
    ['EEG C3-LE', 'C3', 'other', 'LE'],
    ['EEG C3-LM', 'C3', 'other', 'LM'], // "linked mastoids" abbreviated: not a spelling with both names
    ['C3-(A1+A2)', 'C3', 'other', '(A1+A2)'], // a sum, not an average
    ['EEG C3-AVG', 'C3', 'other', 'AVG'],
    ['EEG M1-M2', 'M1', 'other', 'M2'],
  ])('%s → %s, %s against %s', (label, name, kind, referredTo) => {
    expect(read(label)).toEqual({ type: 'EEG', name, kind, referredTo });
  });

  it('non-EEG derivations are classified by the same rule but are never scalp pairs', () => {
    // E1/E2: AASM eye electrodes (not 10-10 scalp sites)
    expect(read('E1-M2')).toEqual({ type: 'EOG', name: 'E1', kind: 'other', referredTo: 'M2' });
    expect(read('EOG LOC')).toEqual({ type: 'EOG', name: 'LOC', kind: 'common', referredTo: null });
  });
});

describe('referenceKey', () => {
  it('one spelling per reference: the unnamed common reference is null whatever the word', () => {
    expect([null, 'REF', 'Ref', ' reference ', ''].map(referenceKey)).toEqual([null, null, null, null, null]);
    expect(['m2', 'A2', 'M2M1', 'a1+a2', 'oz', 'avg'].map(referenceKey)).toEqual(['M2', 'A2', 'M1+M2', 'A1+A2', 'Oz', 'AVG']);
  });
});
