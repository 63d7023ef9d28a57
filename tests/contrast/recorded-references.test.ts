// A contrast never pools 'recorded' spectra whose recorded references differ: C3 against M2 (the
// AASM derivation C3-M2, AASM Manual v2.x) and C3 against an amplifier's common reference are
// different signals. The reference of each stored channel comes from its EDF label
// (channels.reference_electrode); "C3" and "C3-REF" both name no site (common practice: REF is
// the amplifier's reference), so they count as one.
import { describe, expect, it } from 'vitest';
import { assembleContrast, ContrastDataError } from '../../src/core/contrast/assemble.ts';
import type { ContrastData, RecordedReference, SpectrumRow } from '../../src/core/contrast/data.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';

const NBINS = 41;
/** Four subjects per group, channels C3 and C4; power 1/f with a per-subject level (values do not matter here). */
function data(references: Record<string, string | null>, sessions: Record<string, string | null> = {}): ContrastData {
  const rows: SpectrumRow[] = [];
  const participants: ContrastData['participants'] = [];
  const recordedReferences: RecordedReference[] = [];
  Object.keys(references).forEach((subject, s) => {
    participants.push({ subject, group: s % 2 === 0 ? 'control' : 'patient' });
    for (const channel of ['C3', 'C4']) {
      const power = Float32Array.from({ length: NBINS }, (_, k) => (10 + s) / Math.max(k * 0.25, 0.25));
      const session = sessions[subject] ?? null;
      rows.push({ subject, session, channel, stage: 'N2', nEpochs: 40, flagged: false, flagReason: null, power });
      // C4 of the AASM export is C4-M1; C3 is C3-M2
      const ref = references[subject];
      recordedReferences.push({ subject, session, channel, referenceElectrode: ref?.toUpperCase() === 'M2' && channel === 'C4' ? 'M1' : ref });
    }
  });
  return { spectra: { freqStartHz: 0, freqStepHz: 0.25, nBins: NBINS, rows }, aperiodic: [], peaks: [], participants, exclusions: [], recordedReferences };
}

const contrast = (over: Record<string, unknown> = {}) =>
  parseContrast({ design: 'groups', groups: ['control', 'patient'], fminHz: 1, fmaxHz: 10, permutations: 10, ...over });

describe('recorded references in a contrast', () => {
  it("refuses a 'recorded' contrast that mixes C3-M2 exports with C3 against a common reference, naming subjects and references", () => {
    const d = data({ a1: 'M2', a2: 'M2', m1: null, m2: 'REF', m3: 'Ref', m4: null });
    expect(() => assembleContrast(contrast(), d)).toThrow(ContrastDataError);
    expect(() => assembleContrast(contrast(), d)).toThrow(
      'channel C3 was recorded against different references: M2 (a1, a2) and the common reference, not named in the label (m1, m2, m3, m4); ' +
        'channel C4 was recorded against different references: M1 (a1, a2) and the common reference, not named in the label (m1, m2, m3, m4). ' +
        "Their 'recorded' spectra are different signals and are not pooled: compare on a reference computed alike for every recording (e.g. contralateral-mastoid), or choose channels recorded alike.",
    );
  });

  it('checks only the channels of the contrast and the subjects that take part', () => {
    const d = data({ a1: 'M2', a2: 'M2', m1: null, m2: null, m3: null, m4: null });
    // C4 alone still mixes M1 and the common reference
    expect(() => assembleContrast(contrast({ channels: ['C4'] }), d)).toThrow(/^channel C4 was recorded against different references: M1 \(a1, a2\)/);
    // without the two exports (left out in the quality screen) nothing is mixed
    const left = {
      ...d,
      exclusions: [
        { subject: 'a1', channel: null, reason: 'x' },
        { subject: 'a2', channel: null, reason: 'x' },
      ],
    };
    expect(assembleContrast(contrast(), left).subjects.map((s) => s.subject)).toEqual(['m1', 'm2', 'm3', 'm4']);
  });

  it('A1/A2 are not M1/M2 as recorded; one reference throughout is pooled; other references are not checked', () => {
    expect(() => assembleContrast(contrast(), data({ a: 'M2', b: 'A2', c: 'M2', d: 'A2' }))).toThrow(/M2 \(a, c\) and A2 \(b, d\)/);
    expect(assembleContrast(contrast(), data({ a: 'M2', b: 'm2', c: 'M2', d: 'M2' })).subjects).toHaveLength(4);
    // a computed reference is the same signal whatever the recording's reference was
    expect(assembleContrast(contrast({ reference: 'contralateral-mastoid' }), data({ a: 'M2', b: null, c: 'M2', d: null })).subjects).toHaveLength(4);
  });

  it('lists at most eight subjects per reference', () => {
    const refs = Object.fromEntries(Array.from({ length: 24 }, (_, i) => [`s${String(i).padStart(2, '0')}`, i < 20 ? null : 'M2']));
    expect(() => assembleContrast(contrast({ channels: ['C3'] }), data(refs))).toThrow(
      /the common reference, not named in the label \(s00, s01, s02, s03, s04, s05, s06, s07 and 12 more\) and M2 \(s20, s21, s22, s23\)/,
    );
  });
});
