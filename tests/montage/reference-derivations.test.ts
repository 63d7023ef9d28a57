// Reference planning for montages stored as derivations. Which derivation is which scheme:
// AASM Manual for the Scoring of Sleep v2.x (F4-M1, C4-M1, O2-M1, backups F3-M2, C3-M2, O1-M2:
// electrode against the contralateral mastoid); 10-20 sides (ACNS guideline 2016: odd left,
// even right, z midline; M1 left, M2 right). The re-referencing equations are the defining ones
// (common practice): linked mastoids x − (M1 + M2)/2, bipolar x_a − x_b.
import { describe, expect, it } from 'vitest';
import { parseChannelLabel } from '../../src/core/montage/labels.ts';
import { planReferences, Rereferencer, type MontageChannel, type ReferencePlan } from '../../src/core/montage/reference.ts';

const ch = (label: string, fsHz = 100): MontageChannel => ({ ...parseChannelLabel(label, 'uV'), fsHz });
const N = 6;
/** Epoch data: channel i holds (i+1)·(t+1) + t mod 3, so every channel and combination differs. */
const data = (n: number) => Array.from({ length: n }, (_, i) => Float32Array.from({ length: N }, (_, t) => (i + 1) * (t + 1) + (t % 3)));
const ALL = ['recorded', 'linked-mastoids', 'contralateral-mastoid', 'average', 'bipolar'] as const;
const outputs = (p: ReferencePlan | undefined) => p?.outputs.map((o) => [o.channel, o.source, o.signal, o.referredTo]);

describe('planReferences on an AASM export (F4-M1, C4-M1, O2-M1, F3-M2, C3-M2, O1-M2; no M1/M2 channels)', () => {
  const aasm = ['EEG F4-M1', 'EEG C4-M1', 'EEG O2-M1', 'EEG F3-M2', 'EEG C3-M2', 'EEG O1-M2', 'EOG E1-M2'].map((l) => ch(l));
  const { plans, skips } = planReferences(aasm, { references: ALL });
  const plan = (r: string) => plans.find((p) => p.reference === r);

  it('stores every AASM derivation under contralateral-mastoid as recorded (no reference signal)', () => {
    expect(outputs(plan('contralateral-mastoid'))).toEqual([
      ['F4', 0, -1, 'M1'],
      ['C4', 1, -1, 'M1'],
      ['O2', 2, -1, 'M1'],
      ['F3', 3, -1, 'M2'],
      ['C3', 4, -1, 'M2'],
      ['O1', 5, -1, 'M2'],
    ]);
    const x = data(aasm.length);
    const out = new Rereferencer(plan('contralateral-mastoid')!, N).apply(x);
    out.forEach((y, k) => expect(Array.from(y)).toEqual(Array.from(x[k])));
  });

  it('keeps the same names under recorded, and skips what cannot be computed, with reasons', () => {
    expect(plan('recorded')!.outputs.map((o) => o.channel)).toEqual(['F4', 'C4', 'O2', 'F3', 'C3', 'O1', 'E1']);
    expect(plans.map((p) => p.reference)).toEqual(['recorded', 'contralateral-mastoid']);
    expect(skips).toEqual([
      { reference: 'linked-mastoids', reason: 'channels are stored as derivations against different references (M1, M2); the common reference is unknown' },
      { reference: 'average', reason: 'channels are stored as derivations against different references (M1, M2); the common reference is unknown' },
      { reference: 'bipolar', reason: 'no bipolar pairs were given and no scalp-to-scalp derivation is recorded' },
    ]);
  });
});

describe('planReferences on a mixed montage (C3-M2, C4-M1, Pz-Oz, Fpz-Cz, Pz-M1, C3-A2, O1-M1)', () => {
  const mixed = ['EEG C3-M2', 'EEG C4-M1', 'EEG Pz-Oz', 'EEG Fpz-Cz', 'EEG Pz-M1', 'EEG C3-A2', 'EEG O1-M1'].map((l) => ch(l));
  const { plans, skips } = planReferences(mixed, { references: ALL, bipolarPairs: ['Fpz-Cz', 'C3-C4'] });
  const plan = (r: string) => plans.find((p) => p.reference === r);

  it('contralateral: C3-M2 and C4-M1 only (C3-A2 repeats C3, O1-M1 is ipsilateral, Pz-M1 midline)', () => {
    expect(outputs(plan('contralateral-mastoid'))).toEqual([
      ['C3', 0, -1, 'M2'],
      ['C4', 1, -1, 'M1'],
    ]);
    expect(skips).toContainEqual({ reference: 'contralateral-mastoid', reason: 'C3-A2: C3 is already stored from C3-M2' });
  });

  it('bipolar: the scalp-to-scalp derivations as recorded; a pair recorded as such is not added twice; pairs across references skipped', () => {
    expect(outputs(plan('bipolar'))).toEqual([
      ['Pz-Oz', 2, -1, 'Oz'],
      ['Fpz-Cz', 3, -1, 'Cz'],
    ]);
    expect(skips).toContainEqual({ reference: 'bipolar', reason: 'pair C3-C4: the two channels are recorded against different references' });
  });

  it('recorded names a scalp pair by both electrodes, never by its first electrode alone', () => {
    expect(plan('recorded')!.outputs.map((o) => o.channel)).toEqual(['C3', 'C4', 'Pz-Oz', 'Fpz-Cz', 'Pz', 'C3', 'O1']);
  });

  it('linked mastoids and average are skipped: the channels have no common reference', () => {
    const reasons = skips.filter((s) => s.reference === 'linked-mastoids' || s.reference === 'average');
    expect(reasons.map((s) => s.reference)).toEqual(['linked-mastoids', 'average']);
    for (const s of reasons)
      expect(s.reason).toBe('channels are stored as derivations against different references (M2, M1, Oz, Cz, A2); the common reference is unknown');
  });
});

describe('planReferences on montages with one named reference', () => {
  it('all against linked mastoids (C3-M1M2 …): stored under linked-mastoids, the average computed from them', () => {
    const linked = ['EEG C3-M1M2', 'EEG C4-M1M2', 'EEG Cz-M1M2', 'EEG O1-M1M2'].map((l) => ch(l));
    const { plans, skips } = planReferences(linked, { references: ['linked-mastoids', 'contralateral-mastoid', 'average'] });
    expect(outputs(plans.find((p) => p.reference === 'linked-mastoids'))).toEqual([
      ['C3', 0, -1, 'M1+M2'],
      ['C4', 1, -1, 'M1+M2'],
      ['Cz', 2, -1, 'M1+M2'],
      ['O1', 3, -1, 'M1+M2'],
    ]);
    // one common reference: the average is x − mean over the 4 sites whatever it is
    const avg = plans.find((p) => p.reference === 'average')!;
    const x = data(4);
    const y = new Rereferencer(avg, N).apply(x);
    const mean = (t: number) => (x[0][t] + x[1][t] + x[2][t] + x[3][t]) / 4;
    expect(y[2][4]).toBeCloseTo(x[2][4] - mean(4), 4);
    expect(skips).toEqual([{ reference: 'contralateral-mastoid', reason: 'mastoid M1/A1 and M2/A2 not recorded' }]);
  });

  it('all against Cz (C3-Cz …, M1-Cz, M2-Cz): recorded as scalp pairs, yet re-referenced as a monopolar montage', () => {
    const cz = ['EEG C3-Cz', 'EEG C4-Cz', 'EEG O1-Cz', 'EEG M1-Cz', 'EEG M2-Cz'].map((l) => ch(l));
    const { plans, skips } = planReferences(cz, { references: ALL });
    expect(skips).toEqual([]);
    const plan = (r: string) => plans.find((p) => p.reference === r)!;
    expect(plan('recorded').outputs.map((o) => o.channel)).toEqual(['C3-Cz', 'C4-Cz', 'O1-Cz', 'M1', 'M2']);
    expect(plan('bipolar').outputs.map((o) => o.channel)).toEqual(['C3-Cz', 'C4-Cz', 'O1-Cz']);
    const x = data(5);
    // linked mastoids: (C3 − Cz) − ((M1 − Cz) + (M2 − Cz))/2 = C3 − (M1 + M2)/2
    const linked = new Rereferencer(plan('linked-mastoids'), N).apply(x);
    expect(plan('linked-mastoids').outputs.map((o) => o.channel)).toEqual(['C3', 'C4', 'O1']);
    expect(linked[0][3]).toBeCloseTo(x[0][3] - (x[3][3] + x[4][3]) / 2, 4);
    // average over C3, C4, O1 and Cz (0 against itself): 4 sites
    const avg = new Rereferencer(plan('average'), N).apply(x);
    expect(avg[1][2]).toBeCloseTo(x[1][2] - (x[0][2] + x[1][2] + x[2][2]) / 4, 4);
  });
});
