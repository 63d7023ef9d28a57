/**
 * The spatial side of a contrast over channels without 10-10 names (a high-density net, E1 … E64):
 * neighbours from the positions stored at ingest or a neighbour table, one-line refusals without
 * either, and a planted effect on a patch of electrodes found as one cluster over that patch.
 * Spectra and positions are invented; the sites of the net are the 64 idealised 10-10 positions
 * under E-numbers, so the patch is known by geometry.
 */
import { describe, expect, it } from 'vitest';
import { channelLayout, MAX_SPREAD_DEG } from '../../src/core/contrast/channel-layout.ts';
import { ContrastDataError } from '../../src/core/contrast/data-error.ts';
import type { ChannelPositionRow, ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { positionNeighbours } from '../../src/core/montage/adjacency.ts';
import { channelPosition, type Position3 } from '../../src/core/montage/positions.ts';
import { TEN_TEN_64 } from '../../src/core/simulate/synthetic-database.ts';
import { Random } from '../../src/core/stats/random.ts';

const NET = TEN_TEN_64.map((site, i) => ({ name: `E${i + 1}`, site, p: channelPosition(site)! }));
const NAMES = NET.map((e) => e.name);
const STEP = 0.5;
const F0 = 8;
const NBINS = 25; // 8 … 20 Hz
const angleDeg = (a: Position3, b: Position3) => (Math.acos(Math.min(1, a.x * b.x + a.y * b.y + a.z * b.z)) * 180) / Math.PI;
// the patch: electrodes within 30° of the C3 site (geometry of the idealised sphere)
const PATCH = NET.filter((e) => angleDeg(e.p, channelPosition('C3')!) <= 30).map((e) => e.name);

function cohort(nPerGroup: number, seed: number, boost: number): ContrastData {
  const rng = new Random(seed);
  const rows: SpectrumRow[] = [];
  const positions: ChannelPositionRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < 2 * nPerGroup; s++) {
    const subject = `s${String(s).padStart(2, '0')}`;
    const group = s < nPerGroup ? 'a' : 'b';
    participants.push({ subject, group });
    for (const e of NET) {
      positions.push({ subject, session: null, channel: e.name, ...e.p });
      const power = new Float32Array(NBINS);
      for (let k = 0; k < NBINS; k++) {
        const f = F0 + k * STEP;
        const planted = group === 'b' && PATCH.includes(e.name) && f >= 11 && f <= 15 ? boost : 1;
        power[k] = (100 / f) * planted * Math.exp(0.15 * rng.normal());
      }
      rows.push({ subject, session: null, channel: e.name, stage: 'N2', nEpochs: 60, flagged: false, flagReason: null, power });
    }
  }
  return { spectra: { freqStartHz: F0, freqStepHz: STEP, nBins: NBINS, rows }, aperiodic: [], peaks: [], participants, exclusions: [], positions };
}

const used = (data: ContrastData) => new Set(data.participants.map((p) => `${p.subject}\u0000`));
const contrast = (extra: Record<string, unknown> = {}) =>
  parseContrast({ design: 'groups', groups: ['a', 'b'], fminHz: F0, fmaxHz: 20, permutations: 200, ...extra });

describe('channel layout of a contrast', () => {
  it('joins E-numbered channels by their stored positions, as the neighbours of those positions', () => {
    const data = cohort(2, 1, 1);
    const { layout, graph } = channelLayout(contrast(), NAMES, data, used(data), true);
    expect(layout.neighbours).toBe('positions');
    expect(layout.positions[9]).toEqual(NET[9].p);
    expect(graph).toEqual(
      positionNeighbours(
        NET.map((e) => e.p),
        NAMES,
      ),
    );
    // without a graph (channel average, one channel) nothing is required
    expect(channelLayout(contrast(), ['E1'], { ...data, positions: [] }, used(data), false).graph).toBeNull();
  });

  it('refuses in one line naming the channels without a position, unless a neighbour table covers them', () => {
    const data = cohort(2, 1, 1);
    const some = { ...data, positions: data.positions!.filter((r) => r.channel !== 'E3' && r.channel !== 'E7') };
    const err = (() => {
      try {
        channelLayout(contrast(), NAMES.slice(0, 8), some, used(data), true);
      } catch (e) {
        return e as Error;
      }
    })();
    expect(err).toBeInstanceOf(ContrastDataError);
    expect(err!.message).toMatch(/^channels E3, E7 have no position and no neighbour table: /);
    expect(err!.message).not.toContain('\n');
    // without stored positions (a database written before they were stored) 10-10 names keep the template
    expect(channelLayout(contrast(), ['C3', 'Cz', 'C4'], { ...data, positions: undefined }, used(data), true).layout.neighbours).toBe('positions');
    // a table: its graph, and the channels it does not mention named
    const table = contrast({ neighbours: { E1: ['E2'], E2: ['E3'] } });
    expect(channelLayout(table, ['E1', 'E2', 'E3'], some, used(data), true)).toEqual({
      layout: { neighbours: 'table', positions: [NET[0].p, NET[1].p, null] },
      graph: [[1], [0, 2], [1]],
    });
    expect(() => channelLayout(table, ['E1', 'E2', 'E4'], some, used(data), true)).toThrow(
      'channels E4 are not in the neighbour table; add them (a channel with no neighbours has a row of its own) or leave them out of the contrast',
    );
  });

  it('places a scalp pair of stored electrodes halfway between them, and a pair of 10-10 names on the template', () => {
    // re-referenced bipolar channels are not channels rows of their own (E1-E3: the vertex and the nose electrodes of the stored net)
    const data = cohort(2, 1, 1);
    const e1 = NET.find((e) => e.site === 'Cz')!;
    const e2 = NET.find((e) => e.site === 'Fz')!;
    const { layout } = channelLayout(contrast(), [`${e1.name}-${e2.name}`, 'F3-C3', 'E1-X9'], data, used(data), false);
    const mid = { x: (e1.p.x + e2.p.x) / 2, y: (e1.p.y + e2.p.y) / 2, z: (e1.p.z + e2.p.z) / 2 };
    const r = Math.hypot(mid.x, mid.y, mid.z);
    expect(layout.positions[0]!.y).toBeCloseTo(mid.y / r, 12);
    expect(layout.positions[0]!.z).toBeCloseTo(mid.z / r, 12);
    expect(layout.positions[1]).toEqual(channelPosition('F3-C3'));
    expect(layout.positions[2]).toBeNull();
  });

  it('pools slightly different digitised positions by their mean direction and refuses two layouts under one name', () => {
    const data = cohort(2, 1, 1);
    const tilt = (p: Position3, deg: number): Position3 => {
      const t = (deg * Math.PI) / 180;
      return { x: p.x * Math.cos(t) - p.z * Math.sin(t), y: p.y, z: p.x * Math.sin(t) + p.z * Math.cos(t) };
    };
    // s00 and s01 have Cz's electrode 5° either side of the vertex: the mean direction is the vertex
    const cz = NET.find((e) => e.site === 'Cz')!;
    const moved = data.positions!.map((r) => (r.channel === cz.name && r.subject <= 's01' ? { ...r, ...tilt(cz.p, r.subject === 's00' ? 5 : -5) } : r));
    const [at] = channelLayout(contrast(), [cz.name], { ...data, positions: moved }, new Set(['s00\u0000', 's01\u0000']), false).layout.positions;
    expect(at!.z).toBeCloseTo(1, 12);
    const far = data.positions!.map((r) => (r.channel === cz.name && r.subject === 's03' ? { ...r, ...tilt(cz.p, 2 * MAX_SPREAD_DEG + 10) } : r));
    expect(() => channelLayout(contrast(), NAMES, { ...data, positions: far }, used(data), true)).toThrow(
      /^channel E\d+ lies at different places in different recordings \(subject s03 \d+° from the mean of 4\)/,
    );
  });

  it('finds an effect planted on a patch of E-numbered electrodes as one cluster over the patch', () => {
    // 2 × 12 subjects, 64 channels × 25 bins (8–20 Hz), 200 permutations; 1.6× power at 11–15 Hz
    // on the electrodes within 30° of the C3 site (PATCH), lognormal noise sd 0.15
    expect(PATCH.length).toBeGreaterThanOrEqual(5);
    const r = compare(contrast(), cohort(12, 5, 1.6));
    expect(r.channelLayout.neighbours).toBe('positions');
    const significant = r.clusters.filter((k) => k.p < 0.05);
    expect(significant).toHaveLength(1);
    const k = significant[0];
    expect(k.sign).toBe(1);
    // the cluster covers every patch electrode and reaches at most one neighbour step beyond it
    expect(k.channels).toEqual(expect.arrayContaining(PATCH));
    const graph = positionNeighbours(
      NET.map((e) => e.p),
      NAMES,
    );
    const nearPatch = new Set(PATCH.flatMap((c) => [c, ...graph[NAMES.indexOf(c)].map((i) => NAMES[i])]));
    for (const c of k.channels) expect(nearPatch.has(c), c).toBe(true);
    expect(k.fminHz).toBeGreaterThanOrEqual(10);
    expect(k.fmaxHz).toBeLessThanOrEqual(16);
  });
});
