import { describe, expect, it } from 'vitest';
import { parseChannelLabel } from '../../src/core/montage/labels.ts';
import { planReferences, Rereferencer, hemisphere, type MontageChannel } from '../../src/core/montage/reference.ts';

const ch = (label: string, fsHz = 100): MontageChannel => ({ ...parseChannelLabel(label, 'uV'), fsHz });
const N = 8;
/** Epoch data: channel i holds the constant-free ramp (i+1)·t so every combination is distinct. */
const data = (n: number) => Array.from({ length: n }, (_, i) => Float32Array.from({ length: N }, (_, t) => (i + 1) * (t + 1) + (t % 3)));

describe('planReferences', () => {
  // 10-20 sites (ACNS 2016): odd left, even right, z midline; mastoids M1 left, M2 right.
  const mono = ['EEG F3', 'EEG F4', 'EEG C3', 'EEG C4', 'EEG Cz', 'EEG O1', 'EEG O2', 'EEG M1', 'EEG M2', 'EOG LOC'].map((l) => ch(l));

  it('supports every reference on a monopolar montage and computes the defining equations', () => {
    const { plans, skips } = planReferences(mono, {
      references: ['recorded', 'linked-mastoids', 'contralateral-mastoid', 'average', 'bipolar'],
      bipolarPairs: ['F3-C3', 'C4-O2'],
    });
    expect(skips).toEqual([]);
    const x = data(mono.length);
    const at = (name: string) => x[mono.findIndex((c) => c.electrode === name)];
    const get = (ref: string) => {
      const plan = plans.find((p) => p.reference === ref)!;
      const out = new Rereferencer(plan, N).apply(x);
      return Object.fromEntries(plan.outputs.map((o, k) => [o.channel, Array.from(out[k])]));
    };
    const t = 5;
    const linked = get('linked-mastoids');
    // linked mastoids: ch − (M1 + M2)/2
    expect(linked.C3[t]).toBeCloseTo(at('C3')[t] - (at('M1')[t] + at('M2')[t]) / 2, 4);
    expect(Object.keys(linked).sort()).toEqual(['C3', 'C4', 'Cz', 'F3', 'F4', 'O1', 'O2']);
    const contra = get('contralateral-mastoid');
    expect(contra.C3[t]).toBeCloseTo(at('C3')[t] - at('M2')[t], 4); // left − M2
    expect(contra.O2[t]).toBeCloseTo(at('O2')[t] - at('M1')[t], 4); // right − M1
    expect(contra.Cz).toBeUndefined(); // midline left out (documented rule)
    const avg = get('average');
    const scalp = ['F3', 'F4', 'C3', 'C4', 'Cz', 'O1', 'O2'];
    const mean = scalp.reduce((s, e) => s + at(e)[t], 0) / scalp.length; // mastoids and EOG excluded
    expect(avg.Cz[t]).toBeCloseTo(at('Cz')[t] - mean, 4);
    // an average-referenced montage sums to zero over its sites at every instant
    expect(scalp.reduce((s, e) => s + avg[e][t], 0)).toBeCloseTo(0, 3);
    const bip = get('bipolar');
    expect(bip['F3-C3'][t]).toBeCloseTo(at('F3')[t] - at('C3')[t], 4);
    expect(bip['C4-O2'][t]).toBeCloseTo(at('C4')[t] - at('O2')[t], 4);
    const rec = get('recorded');
    expect(rec.LOC).toBeDefined(); // recorded keeps every given channel
  });

  it('skips linked mastoids and average for derivations against different references; AASM derivations are the contralateral-mastoid reference', () => {
    const deriv = ['EEG F4-M1', 'EEG C4-M1', 'EEG O2-M1', 'EEG C3-M2'].map((l) => ch(l));
    const { plans, skips } = planReferences(deriv, { references: ['recorded', 'linked-mastoids', 'average', 'contralateral-mastoid'] });
    expect(plans.map((p) => p.reference)).toEqual(['recorded', 'contralateral-mastoid']);
    expect(plans[1].outputs.map((o) => o.channel)).toEqual(['F4', 'C4', 'O2', 'C3']);
    expect(skips.map((s) => s.reference)).toEqual(['linked-mastoids', 'average']);
    for (const s of skips) expect(s.reason).toMatch(/different references/);
  });

  it('skips mastoid references when a mastoid is missing, naming it', () => {
    const noM2 = ['EEG C3', 'EEG C4', 'EEG Cz', 'EEG A1'].map((l) => ch(l));
    const { plans, skips } = planReferences(noM2, { references: ['linked-mastoids', 'average'] });
    expect(plans.map((p) => p.reference)).toEqual(['average']);
    expect(skips).toEqual([{ reference: 'linked-mastoids', reason: 'mastoid M2/A2 not recorded' }]);
  });

  it('uses a mastoid that is the common reference as a zero signal', () => {
    // all against M2: C3-M2, C4-M2, M1-M2 → linked = C3 − M2 − (M1 − M2)/2 = C3 − 0.5·(M1-M2)
    const m2 = ['EEG C3-M2', 'EEG C4-M2', 'EEG M1-M2'].map((l) => ch(l));
    const { plans, skips } = planReferences(m2, { references: ['linked-mastoids', 'contralateral-mastoid'] });
    expect(skips).toEqual([]);
    const x = data(3);
    const linked = new Rereferencer(plans[0], N).apply(x);
    expect(linked[0][3]).toBeCloseTo(x[0][3] - 0.5 * x[2][3], 4);
    const contra = new Rereferencer(plans[1], N).apply(x);
    expect(contra[0][3]).toBeCloseTo(x[0][3], 4); // C3 − M2 = C3 as recorded
    expect(contra[1][3]).toBeCloseTo(x[1][3] - x[2][3], 4); // C4 − M1
  });

  it('skips bipolar pairs across references or with missing electrodes, and mixed rates', () => {
    const mixed = [ch('EEG C3-M2'), ch('EEG C4-M1'), ch('EEG O1-M2')];
    const { plans, skips } = planReferences(mixed, { references: ['bipolar'], bipolarPairs: ['C3-O1', 'C3-C4', 'F3-C3'] });
    expect(plans[0].outputs.map((o) => o.channel)).toEqual(['C3-O1']);
    expect(skips.map((s) => s.reason)).toEqual([
      'pair C3-C4: the two channels are recorded against different references',
      'pair F3-C3: electrode F3 is not among the EEG channels',
    ]);
    const rates = [ch('EEG C3', 256), ch('EEG C4', 256), ch('EEG Cz', 128)];
    expect(planReferences(rates, { references: ['average'] }).skips[0].reason).toMatch(/sampling rates/);
    expect(() => planReferences(rates, { references: ['bipolar'], bipolarPairs: ['C3/C4'] })).toThrow(/invalid bipolar pair 'C3\/C4'/);
  });

  it('needs three scalp sites for an average reference', () => {
    const two = [ch('EEG C3'), ch('EEG C4'), ch('EEG M1')];
    expect(planReferences(two, { references: ['average'] }).skips[0].reason).toBe('average reference needs at least 3 scalp EEG sites, found 2');
  });

  it('assigns hemispheres by the 10-20 numbering', () => {
    expect([hemisphere('C3'), hemisphere('Fp2'), hemisphere('Cz'), hemisphere('A1'), hemisphere('LOC')]).toEqual(['left', 'right', 'midline', 'left', null]);
  });
});
