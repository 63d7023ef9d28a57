// Scalp pairs on the scalp map: a bipolar channel (Pz-Oz) is drawn at the midpoint of its two
// electrodes with a line between them. 10-20 rule (Jasper 1958): Pz at 70 %, Oz at 90 % of the
// nasion–inion arc, so their midpoint is the 10-10 site POz at 80 %.
import * as Plot from '@observablehq/plot';
import { describe, expect, it } from 'vitest';
import { mapElectrodes, scalpMapPlot } from '../../src/dashboard/components/scalp-map.ts';
import { electrodePosition, projectToDisk } from '../../src/core/montage/positions.ts';

const disk = (name: string) => projectToDisk(electrodePosition(name)!);

describe('scalp map with scalp pairs', () => {
  const electrodes = mapElectrodes([
    { channel: 'Pz-Oz', value: 1 },
    { channel: 'C3', value: 2 },
    { channel: 'C4-M1', value: 3 },
  ]);

  it('puts a pair at its midpoint with both ends, a mastoid derivation at its electrode', () => {
    expect(electrodes.map((e) => e.channel)).toEqual(['Pz-Oz', 'C3', 'C4-M1']);
    const [pair, c3, c4] = electrodes;
    expect(pair.x).toBeCloseTo(disk('POz').x, 12);
    expect(pair.y).toBeCloseTo(disk('POz').y, 12);
    expect(pair.pair).toEqual({ x1: disk('Pz').x, y1: disk('Pz').y, x2: disk('Oz').x, y2: disk('Oz').y });
    expect([c3.x, c3.y, c3.pair]).toEqual([disk('C3').x, disk('C3').y, undefined]);
    expect([c4.x, c4.y, c4.pair]).toEqual([disk('C4').x, disk('C4').y, undefined]);
  });

  it('draws one line per pair, under the electrode discs', () => {
    const marks = scalpMapPlot(electrodes, { scale: 'sequential', label: 'x' }).marks as unknown[];
    const links = marks.filter((m) => m instanceof Plot.Link) as (Plot.Link & { data: unknown[] })[];
    expect(links).toHaveLength(1);
    expect(links[0].data).toEqual([electrodes[0]]);
    expect(marks.indexOf(links[0])).toBeLessThan(marks.findIndex((m) => m instanceof Plot.Dot));
  });
});
