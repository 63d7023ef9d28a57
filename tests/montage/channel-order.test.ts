// The one channel order (src/core/montage/channel-order.ts): front to back, then left to right, by
// stored positions or the 10-10 template (positions.ts: x to the right ear, y to the nasion);
// channels without a position last, by name. Expected orders follow the 10-20 layout (Jasper 1958:
// Fp, F, C/T, P, O rows from front to back; odd numbers left, z midline, even numbers right).
import { describe, expect, it } from 'vitest';
import { frontToBack, storedPositionOf } from '../../src/core/montage/channel-order.ts';

describe('front to back, then left to right', () => {
  it('orders the 10-20 electrodes by row from the front, and each left–right pair left first', () => {
    const names = ['O2', 'Pz', 'C4', 'EMG', 'Fp2', 'T8', 'Cz', 'F4', 'M1', 'C3', 'O1', 'Fz', 'ECG', 'T7', 'P3', 'Fp1', 'F3', 'P4'];
    const order = frontToBack(names);
    // the central row lies on the pre-auricular line (y = 0): left ear to right ear
    expect(order.filter((c) => ['T7', 'C3', 'Cz', 'C4', 'T8'].includes(c))).toEqual(['T7', 'C3', 'Cz', 'C4', 'T8']);
    const at = (c: string) => order.indexOf(c);
    for (const [front, back] of [
      ['Fp1', 'F3'],
      ['F3', 'C3'],
      ['Fz', 'Cz'],
      ['C3', 'P3'],
      ['Pz', 'O1'],
    ])
      expect(at(front), `${front} before ${back}`).toBeLessThan(at(back));
    for (const [left, right] of [
      ['Fp1', 'Fp2'],
      ['F3', 'F4'],
      ['P3', 'P4'],
      ['O1', 'O2'],
    ])
      expect(at(right), `${left} then ${right}`).toBe(at(left) + 1);
    // the mastoid M1 has a template position (below the left ear); names without one come last, by name
    expect(order.slice(-2)).toEqual(['ECG', 'EMG']);
    expect(order).toHaveLength(names.length);
  });

  it('uses a stored position where there is one (a digitised cap), the template for the others', () => {
    const stored = storedPositionOf([
      { channel: 'E1', x: -20, y: 80, z: 10 },
      { channel: 'E2', x: 20, y: 80, z: 10 },
      { channel: 'E3', x: 0, y: -90, z: 5 },
      { channel: 'E1', x: 99, y: -99, z: 0 }, // a later recording's row: the first one counts
    ]);
    expect(frontToBack(['E3', 'E2', 'X9', 'E1'], stored)).toEqual(['E1', 'E2', 'E3', 'X9']);
  });

  it('puts channels without a position last, numbers by value: a net numbered E1 … E256 reads E2 before E10 (common practice)', () => {
    expect(frontToBack(['E10', 'E2', 'E1', 'E100', 'ECG', 'E9'])).toEqual(['E1', 'E2', 'E9', 'E10', 'E100', 'ECG']);
  });
});
