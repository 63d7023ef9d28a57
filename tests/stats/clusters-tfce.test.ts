import { describe, expect, it } from 'vitest';
import { ClusterWork, findClusters, maxClusterStatistic } from '../../src/core/stats/clusters.ts';
import { TfceWork, tfceScores } from '../../src/core/stats/tfce.ts';
import { pointGraphEdges } from '../../src/core/stats/point-graph.ts';
import { delaunayNeighbours } from '../../src/core/montage/adjacency.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

// Outside reference: scipy.sparse.csgraph.connected_components on the same point graph, for the
// cluster labelling and for TFCE computed by its definition (Smith & Nichols 2009: the sum over
// levels h_k = k·dh of e(h_k)^E·h_k^H·dh, e = size of the component holding the point at h_k).
const channels = ['F3', 'Fz', 'F4', 'C3', 'Cz', 'C4', 'P3', 'Pz', 'P4'];
const F = 15;
const P = channels.length * F;
const edges = pointGraphEdges(channels.length, F, { channelNeighbours: delaunayNeighbours(channels) });
const rng = new Random(9);
// smooth random map: a moving average over frequency of white noise, scaled to |t| up to ~5
const stat = new Float64Array(P);
for (let c = 0; c < channels.length; c++) {
  const w = Array.from({ length: F + 2 }, () => rng.normal());
  for (let f = 0; f < F; f++) stat[c * F + f] = 1.6 * (w[f] + w[f + 1] + w[f + 2]);
}
const threshold = 2.1;
const tfce = { E: 0.5, H: 2, dh: 0.1 };

const ref = runPython<{ masses: number[]; sizes: number[]; score: number[] }>(
  `from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
P = ${P}; thr = ${threshold}; E, H, dh = ${tfce.E}, ${tfce.H}, ${tfce.dh}
stat = numpy.fromfile(inputs['stat'])
e = numpy.fromfile(inputs['edges']).astype(int).reshape(-1, 2)
def components(mask):
    keep = mask[e[:, 0]] & mask[e[:, 1]]
    g = coo_matrix((numpy.ones(keep.sum()), (e[keep, 0], e[keep, 1])), shape=(P, P))
    return connected_components(g, directed=False)[1]
masses, sizes = [], []
for sign in (1, -1):
    mask = sign * stat > thr
    lab = components(mask)
    for l in numpy.unique(lab[mask]):
        masses.append(float(stat[(lab == l) & mask].sum())); sizes.append(int(((lab == l) & mask).sum()))
score = numpy.zeros(P)
for sign in (1, -1):
    v = sign * stat
    k = 1
    while (v / dh + 1e-9 >= k).any():
        mask = v / dh + 1e-9 >= k
        lab = components(mask)
        counts = numpy.bincount(lab[mask], minlength=P)
        score[mask] += sign * counts[lab[mask]] ** E * (k * dh) ** H * dh
        k += 1
print(json.dumps({"masses": masses, "sizes": sizes, "score": score.tolist()}))`,
  { stat, edges },
);

describe('cluster labelling and TFCE on the channel × frequency graph', () => {
  it('clusters and their masses equal scipy connected components', () => {
    const clusters = findClusters(stat, threshold, new ClusterWork(P, edges));
    expect(clusters.length).toBe(ref.masses.length);
    expect(clusters.length).toBeGreaterThan(2);
    expect(clusters.some((c) => c.sign === -1) && clusters.some((c) => c.sign === 1)).toBe(true);
    const ours = clusters.map((c) => `${c.mass.toFixed(9)}/${c.size}`).sort();
    const theirs = ref.masses.map((m, i) => `${m.toFixed(9)}/${ref.sizes[i]}`).sort();
    expect(ours).toEqual(theirs);
    // two-tailed null statistic: the largest |mass| over both signs; by size: the largest size
    const work = new ClusterWork(P, edges);
    expect(maxClusterStatistic(stat, threshold, 'mass', work)).toBeCloseTo(Math.max(...ref.masses.map(Math.abs)), 9);
    expect(maxClusterStatistic(stat, threshold, 'size', work)).toBe(Math.max(...ref.sizes));
    expect(maxClusterStatistic(new Float64Array(P), threshold, 'mass', work)).toBe(0);
  });

  it('TFCE scores equal the level-by-level definition, positive and negative parts apart', () => {
    const score = new Float64Array(P);
    const max = tfceScores(stat, tfce, new TfceWork(P, edges), score);
    let worst = 0;
    for (let p = 0; p < P; p++) worst = Math.max(worst, Math.abs(score[p] - ref.score[p]) / Math.max(1, Math.abs(ref.score[p])));
    expect(worst).toBeLessThan(1e-9);
    for (let p = 0; p < P; p++) expect(Math.sign(score[p])).toBe(stat[p] >= tfce.dh - 1e-12 ? 1 : stat[p] <= -tfce.dh + 1e-12 ? -1 : 0);
    expect(max).toBeCloseTo(Math.max(...ref.score.map(Math.abs)), 9);
  });
});
