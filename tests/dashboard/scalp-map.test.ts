// Scalp pairs on the scalp map: a bipolar channel (Pz-Oz) is drawn at the midpoint of its two
// electrodes with a line between them. 10-20 rule (Jasper 1958): Pz at 70 %, Oz at 90 % of the
// nasion–inion arc, so their midpoint is the 10-10 site POz at 80 %.
import * as Plot from '@observablehq/plot';
import { describe, expect, it } from 'vitest';
import { mapElectrodes, scalpMapPlot } from '../../src/dashboard/components/scalp-map.ts';
import { electrodePosition, projectToDisk } from '../../src/core/montage/positions.ts';
import type { CompareResult } from '../../src/core/contrast/run.ts';
import { clusterChannelMeans } from '../../src/dashboard/views/contrast/contrast-data.ts';

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

// Channels without 10-10 names (a high-density net, E1 …) are drawn at the positions the contrast
// result carries (channelLayout: stored at ingest from the positions file), projected like the
// template (azimuthal equidistant, positions.ts projectToDisk); without one they are left off.
describe('scalp map of an E-numbered net', () => {
  it('places each channel at the position of the result layout', () => {
    const at = (name: string) => electrodePosition(name)!;
    const result = {
      statistics: { channels: ['E1', 'E2', 'E3'], freqsHz: [12, 13], stat: Float64Array.from([1, 3, -2, -2, 5, 7]), clusters: [{ fminHz: 12, fmaxHz: 13 }] },
      channelLayout: { neighbours: 'positions', positions: [at('Cz'), at('Fz'), null] },
    } as unknown as CompareResult;
    const means = clusterChannelMeans(result, 0);
    // mean t over the cluster's 12–13 Hz: (1 + 3)/2, (−2 − 2)/2, (5 + 7)/2
    expect(means).toEqual([
      { channel: 'E1', value: 2, position: at('Cz') },
      { channel: 'E2', value: -2, position: at('Fz') },
      { channel: 'E3', value: 6, position: null },
    ]);
    const drawn = mapElectrodes(means);
    expect(drawn.map((e) => [e.channel, e.x, e.y])).toEqual([
      ['E1', disk('Cz').x, disk('Cz').y],
      ['E2', disk('Fz').x, disk('Fz').y],
    ]);
  });
});
