// The methods text states the derivations the analysed channels were recorded as (from the EDF
// labels, stored in channels.reference_electrode) and how the analysis' reference was obtained
// from them. The contrast's channel is Cz (tests/report/inputs.ts); the derivation names follow
// the AASM list (C3-M2, C4-M1) and 10-20 naming.
import { describe, expect, it } from 'vitest';
import { methodsReport } from '../../src/core/report/index.ts';
import type { DatabaseFacts } from '../../src/core/report/index.ts';
import { FACTS, LEDGER, fixedResults } from './inputs.ts';

const { cmp } = fixedResults();
const derivations: NonNullable<DatabaseFacts['recordedDerivations']> = [
  { channel: 'C3', referenceElectrode: 'M2', recordings: 12 },
  { channel: 'Cz', referenceElectrode: null, recordings: 20 },
  { channel: 'Cz', referenceElectrode: 'REF', recordings: 8 },
  { channel: 'Cz', referenceElectrode: 'M1', recordings: 12 },
];

describe('methods text: derivations', () => {
  it("states each analysed channel's recorded references with their recording counts (REF and none counted together)", () => {
    const r = methodsReport(cmp, { ...FACTS, recordedDerivations: derivations }, LEDGER);
    expect(r.markdown).toContain(
      "EEG channels as recorded (the reference named in each EDF channel label): Cz against the common reference (none named in the label) in 28 recordings and M1 in 12 recordings. The 'recorded' spectra of a channel were pooled only where every recording named the same reference for it.",
    );
    expect(r.markdown).not.toContain('C3 against'); // not an analysed channel
    expect(r.parameters.recordedDerivations).toEqual(derivations.slice(1));
  });

  it('says how a contralateral-mastoid analysis used AASM derivations and monopolar channels', () => {
    const contralateral = { ...cmp, contrast: { ...cmp.contrast, reference: 'contralateral-mastoid' as const, channels: ['C3'] } };
    const text = methodsReport(contralateral, { ...FACTS, recordedDerivations: derivations }, LEDGER).markdown;
    expect(text).toContain(
      'C3 against M2 in 12 recordings. A channel recorded against the contralateral mastoid (the AASM derivations, e.g. C3-M2 and C4-M1) was used as recorded; a channel recorded against a common reference was referred to the contralateral mastoid (left − M2, right − M1).',
    );
  });

  it('says nothing of derivations when the facts do not hold them', () => {
    expect(methodsReport(cmp, FACTS, LEDGER).markdown).not.toContain('as recorded (the reference named');
  });
});
