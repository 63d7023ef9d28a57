import { describe, expect, it } from 'vitest';
import { AdjacencyError, delaunayNeighbours, distanceNeighbours, parseNeighbourTsv } from '../../src/core/montage/adjacency.ts';
import { electrodePosition, projectToDisk } from '../../src/core/montage/positions.ts';
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
});
