import { describe, expect, it } from 'vitest';
import { channelPosition, electrodePosition, pairPositions, projectToDisk } from '../../src/core/montage/positions.ts';

// The 19 electrodes of the 10-20 system (Jasper 1958; 10-10 names per ACNS guideline 2016).
const TEN_TWENTY = ['Fp1', 'Fp2', 'F7', 'F3', 'Fz', 'F4', 'F8', 'T7', 'C3', 'Cz', 'C4', 'T8', 'P7', 'P3', 'Pz', 'P4', 'P8', 'O1', 'O2'];

describe('10-10 positions', () => {
  it('places every 10-20 electrode on the unit sphere, odd left, even right, z on the midline', () => {
    for (const name of TEN_TWENTY) {
      const p = electrodePosition(name)!;
      expect(p, name).toBeDefined();
      expect(Math.hypot(p.x, p.y, p.z)).toBeCloseTo(1, 12);
      if (name.endsWith('z')) expect(Math.abs(p.x)).toBeLessThan(1e-12);
      else if (Number(name.slice(-1)) % 2 === 1) expect(p.x).toBeLessThan(0);
      else expect(p.x).toBeGreaterThan(0);
    }
  });

  it('follows the 10 % arc steps of the 10-20 rule on the idealised sphere', () => {
    // nasion–inion arc: Fpz–Fz–Cz–Pz–Oz at 10/20/20/20/20/10 % → 22.5° polar steps between Fz, Cz, Pz
    const angle = (a: string, b: string): number => {
      const p = electrodePosition(a)!;
      const q = electrodePosition(b)!;
      return (Math.acos(p.x * q.x + p.y * q.y + p.z * q.z) * 180) / Math.PI;
    };
    expect(angle('Fz', 'Cz')).toBeCloseTo(45, 9);
    expect(angle('Cz', 'Pz')).toBeCloseTo(45, 9);
    expect(angle('Cz', 'C3')).toBeCloseTo(45, 9);
    expect(angle('C3', 'T7')).toBeCloseTo(45, 9);
    // equator: Fp1–F7–T7–P7–O1 at 36° steps (20 % of the half circumference)
    expect(angle('Fp1', 'F7')).toBeCloseTo(36, 9);
    expect(angle('F7', 'T7')).toBeCloseTo(36, 9);
    expect(angle('P7', 'O1')).toBeCloseTo(36, 9);
  });

  it('accepts old temporal names and case variants, rejects non-electrodes', () => {
    expect(electrodePosition('T3')).toEqual(electrodePosition('T7'));
    expect(electrodePosition('t6')).toEqual(electrodePosition('P8'));
    expect(electrodePosition('CZ')).toEqual(electrodePosition('Cz'));
    expect(electrodePosition('EMG')).toBeUndefined();
    expect(electrodePosition('C11')).toBeUndefined();
    expect(electrodePosition('Tz')).toBeUndefined();
  });

  it('projects the vertex to the centre and the equator to the unit circle, nose up', () => {
    expect(projectToDisk(electrodePosition('Cz')!)).toEqual({ x: 0, y: 0 });
    const fpz = projectToDisk(electrodePosition('Fpz')!);
    expect(fpz.y).toBeCloseTo(1, 12);
    const t8 = projectToDisk(electrodePosition('T8')!);
    expect(t8.x).toBeCloseTo(1, 12);
    expect(Math.hypot(fpz.x, fpz.y)).toBeCloseTo(1, 12);
  });
});

describe('channelPosition and pairPositions', () => {
  // 10-20 rule (Jasper 1958): along the nasion–inion arc Fpz, Fz, Cz, Pz, Oz lie at 10, 30, 50,
  // 70 and 90 %; the 10-10 extension puts POz at 80 %. So the arc midpoint of Fpz–Cz is Fz and
  // that of Pz–Oz is POz.
  it('a scalp pair sits halfway between its electrodes on the sphere', () => {
    for (const [pair, mid] of [
      ['Fpz-Cz', 'Fz'],
      ['Pz-Oz', 'POz'],
      ['Cz-Fpz', 'Fz'],
    ]) {
      const p = channelPosition(pair)!;
      const q = electrodePosition(mid)!;
      expect([p.x, p.y, p.z].map((v) => Number(v.toFixed(12)))).toEqual([q.x, q.y, q.z].map((v) => Number(v.toFixed(12))));
    }
  });
  it('an electrode against a mastoid, ear lobe or unnamed reference sits at the electrode', () => {
    expect(channelPosition('C3-M2')).toEqual(electrodePosition('C3'));
    expect(channelPosition('C3-A2')).toEqual(electrodePosition('C3'));
    expect(channelPosition('C3-REF')).toEqual(electrodePosition('C3'));
    expect(channelPosition('C3')).toEqual(electrodePosition('C3'));
    expect(channelPosition('LOC')).toBeUndefined();
    expect(channelPosition('E1-M2')).toBeUndefined();
  });
  it('pairPositions gives both ends of a scalp pair only', () => {
    expect(pairPositions('Pz-Oz')).toEqual([electrodePosition('Pz'), electrodePosition('Oz')]);
    expect(pairPositions('C3-M2')).toBeNull();
    expect(pairPositions('C3')).toBeNull();
  });
});
