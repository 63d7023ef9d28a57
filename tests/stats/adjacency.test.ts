import { describe, expect, it } from 'vitest';
import {
  AdjacencyError,
  channelsMissingFrom,
  delaunayNeighbours,
  distanceNeighbours,
  neighbourTable,
  parseNeighbourTsv,
  positionNeighbours,
  RIM_EDGE_FACTOR,
  tableNeighbours,
} from '../../src/core/montage/adjacency.ts';
import { channelPosition, electrodePosition, projectToDisk, type Position3 } from '../../src/core/montage/positions.ts';
import { TEN_TEN_64 } from '../../src/core/simulate/synthetic-database.ts';
import { runPython } from '../helpers/python.ts';

// The 19 electrodes of the 10-20 system (Jasper 1958; 10-10 names per ACNS guideline 2016).
const TEN_TWENTY = ['Fp1', 'Fp2', 'F7', 'F3', 'Fz', 'F4', 'F8', 'T7', 'C3', 'Cz', 'C4', 'T8', 'P7', 'P3', 'Pz', 'P4', 'P8', 'O1', 'O2'];

function edgeSet(nb: number[][]): string[] {
  const out: string[] = [];
  nb.forEach((list, a) => list.forEach((b) => a < b && out.push(`${a}-${b}`)));
  return out.sort();
}

describe('channel neighbour graphs', () => {
  it('Delaunay neighbours of the projected 10-20 positions equal scipy.spatial.Delaunay', () => {
    // outside reference: scipy.spatial.Delaunay (Qhull) on the same 2-D points
    const xy = TEN_TWENTY.flatMap((c) => {
      const p = projectToDisk(electrodePosition(c)!);
      return [p.x, p.y];
    });
    const ref = runPython<number[][]>(
      `from scipy.spatial import Delaunay
pts = numpy.fromfile(inputs['xy']).reshape(-1, 2)
tri = Delaunay(pts)
edges = set()
for s in tri.simplices:
    for i in range(3):
        a, b = sorted((int(s[i]), int(s[(i + 1) % 3])))
        edges.add((a, b))
print(json.dumps(sorted(edges)))`,
      { xy },
    );
    const nb = delaunayNeighbours(TEN_TWENTY);
    expect(edgeSet(nb)).toEqual(ref.map(([a, b]) => `${a}-${b}`).sort());
    // symmetric, no self-loops; Cz's neighbours are the four around it on the idealised cap
    nb.forEach((list, a) => list.forEach((b) => expect(nb[b]).toContain(a)));
    nb.forEach((list, a) => expect(list).not.toContain(a));
    const cz = nb[TEN_TWENTY.indexOf('Cz')].map((i) => TEN_TWENTY[i]).sort();
    expect(cz).toEqual(['C3', 'C4', 'Fz', 'Pz']);
  });

  it('prunes long Delaunay edges and builds a distance graph', () => {
    // across the vertex: Fp1 and O1 are 144° apart (chord 2·sin 72° = 1.90), each 90° from Cz
    // (chord √2 = 1.41); a three-channel montage triangulates all three, a 1.5 prune drops Fp1–O1
    const three = ['Fp1', 'Cz', 'O1'];
    expect(edgeSet(delaunayNeighbours(three))).toEqual(['0-1', '0-2', '1-2']);
    expect(edgeSet(delaunayNeighbours(three, { maxDistance: 1.5 }))).toEqual(['0-1', '1-2']);
    // chord of 45° = 2·sin 22.5° = 0.765: C3–Cz–C4 neighbours, C3–C4 (90°, 1.414) not
    expect(edgeSet(distanceNeighbours(['C3', 'Cz', 'C4'], 0.8))).toEqual(['0-1', '1-2']);
    expect(() => delaunayNeighbours(['C3', 'X9'])).toThrow(AdjacencyError);
    expect(delaunayNeighbours(['Cz'])).toEqual([[]]);
  });

  it('places scalp pairs halfway between their electrodes and refuses two channels at one site', () => {
    // 10-20 midline (Jasper 1958): Fpz 10 %, Fz 30 %, Cz 50 %, Pz 70 %, Oz 90 % of nasion–inion,
    // 45° per 20 % on the idealised sphere (positions.ts). Fpz-Cz sits at Fz, 45° from Cz: chord
    // 2·sin 22.5° = 0.765; Pz-Oz sits at POz, 67.5° from Cz: chord 2·sin 33.75° = 1.111
    expect(edgeSet(distanceNeighbours(['Fpz-Cz', 'Cz', 'Pz-Oz'], 0.8))).toEqual(['0-1']);
    expect(edgeSet(distanceNeighbours(['Fpz-Cz', 'Cz', 'Pz-Oz'], 1.12))).toEqual(['0-1', '1-2']);
    // C3-M2 and C3-M1 are both measured at C3
    expect(() => delaunayNeighbours(['C3-M2', 'C3-M1', 'C4'])).toThrow('channels "C3-M2" and "C3-M1" sit at one position; give a neighbour table instead');
  });

  it('parses a neighbour TSV, symmetrises it and fails on malformed lines', () => {
    const text = 'channel\tneighbours\nC3\tCz, F3\nCz\tC4\n# comment\n\nF3\tFz\n';
    const nb = parseNeighbourTsv(text, ['C3', 'Cz', 'C4', 'F3']);
    expect(nb).toEqual([[1, 3], [0, 2], [1], [0]]);
    expect(() => parseNeighbourTsv('C3 Cz\n', ['C3', 'Cz'])).toThrow(/line 1/);
    expect(() => parseNeighbourTsv('C3\tC3\n', ['C3', 'Cz'])).toThrow(/lists itself/);
  });

  it('joins the electrodes of an icosahedral cap to exactly the icosahedron edges among them', () => {
    // regular icosahedron: a pole, rings of five at polar angle atan 2 (63.43°) and 180° − atan 2,
    // the lower ring turned 36° (geometry, hand-derived). Without the bottom vertex (11 of 12), the
    // edges among the rest are 30 − 5 = 25: pole–upper ring (5), around the upper ring (5),
    // upper–lower zigzag (10), around the lower ring (5); every edge the same length
    const at = (polarDeg: number, azDeg: number): Position3 => {
      const t = (polarDeg * Math.PI) / 180;
      const a = (azDeg * Math.PI) / 180;
      return { x: Math.sin(t) * Math.sin(a), y: Math.sin(t) * Math.cos(a), z: Math.cos(t) };
    };
    const ring = (Math.atan(2) * 180) / Math.PI;
    const pos = [at(0, 0), ...[0, 1, 2, 3, 4].map((i) => at(ring, 72 * i)), ...[0, 1, 2, 3, 4].map((i) => at(180 - ring, 36 + 72 * i))];
    const names = pos.map((_, i) => `E${i + 1}`);
    const up = (i: number) => 1 + (i % 5);
    const low = (i: number) => 6 + (i % 5);
    const expected: [number, number][] = [];
    for (let i = 0; i < 5; i++) expected.push([0, up(i)], [up(i), up(i + 1)], [up(i), low(i)], [up(i + 1), low(i)], [low(i), low(i + 1)]);
    const want = expected.map(([a, b]) => `${Math.min(a, b)}-${Math.max(a, b)}`).sort();
    expect(want).toHaveLength(25);
    expect(edgeSet(positionNeighbours(pos, names))).toEqual(want);
  });

  it('drops the triangulation edges longer than twice its median edge, as scipy Delaunay with that rule', () => {
    // outside reference: scipy.spatial.Delaunay (Qhull) of the projected 64 10-10 sites, edges
    // kept when their 3-D chord is at most RIM_EDGE_FACTOR × the median edge
    const pos = TEN_TEN_64.map((c) => channelPosition(c)!);
    const ref = runPython<number[][]>(
      `from scipy.spatial import Delaunay
xy = numpy.fromfile(inputs['xy']).reshape(-1, 2)
p = numpy.fromfile(inputs['p']).reshape(-1, 3)
edges = set()
for s in Delaunay(xy).simplices:
    for i in range(3):
        a, b = sorted((int(s[i]), int(s[(i + 1) % 3])))
        edges.add((a, b))
edges = sorted(edges)
length = [float(numpy.linalg.norm(p[a] - p[b])) for a, b in edges]
limit = ${RIM_EDGE_FACTOR} * float(numpy.median(length))
print(json.dumps([[a, b] for (a, b), l in zip(edges, length) if l <= limit]))`,
      {
        xy: pos.flatMap((p) => {
          const d = projectToDisk(p);
          return [d.x, d.y];
        }),
        p: pos.flatMap((p) => [p.x, p.y, p.z]),
      },
    );
    const nb = positionNeighbours(pos, [...TEN_TEN_64]);
    expect(edgeSet(nb)).toEqual(ref.map(([a, b]) => `${a}-${b}`).sort());
    // the two rim edges across the back of the ear are the ones dropped (2.13 × the median)
    const name = (c: string) => TEN_TEN_64.indexOf(c);
    expect(nb[name('PO7')]).not.toContain(name('TP9'));
    expect(nb[name('PO8')]).not.toContain(name('TP10'));
    expect(nb[name('PO7')]).toContain(name('P7'));
  });

  it('turns a neighbour table into a graph over the contrast channels and names channels it does not mention', () => {
    const table = neighbourTable('E1\tE2,E3\nE2\t\nE4\tE9\n');
    expect(table).toEqual({ E1: ['E2', 'E3'], E2: [], E4: ['E9'] });
    expect(tableNeighbours(table, ['e1', 'E2', 'E3'])).toEqual([[1, 2], [0], [0]]);
    expect(channelsMissingFrom(table, ['E1', 'E3', 'E5'])).toEqual(['E5']);
    expect(() => neighbourTable('E1\tE2\nE1\tE3\n')).toThrow('neighbour table line 2: channel "E1" is on line 1 already');
  });
});
