/**
 * Clusters of supra-threshold points (Maris & Oostenveld 2007, J Neurosci Methods 164:177–190):
 * points with stat > +threshold form positive clusters, points with stat < −threshold negative
 * ones; two such points of the same sign are in one cluster when a path of graph edges joins
 * them through points of that sign. Labelling by union-find over the precomputed edge list.
 * Cluster statistic: mass = Σ stat over the cluster (negative for negative clusters), or
 * size = number of points. Two-tailed rule: the null statistic of a permutation is the largest
 * |cluster statistic| over clusters of BOTH signs (0 when no point passes), and an observed
 * cluster is compared through its |statistic|.
 * Speed: only supra-threshold points are visited, each with its adjacency list (precomputed from
 * the edge list), so the work per permutation follows the number of points that pass.
 */
import { UnionFind } from './union-find.ts';
import { adjacencyLists, type AdjacencyLists } from './point-graph.ts';

export type ClusterMeasure = 'mass' | 'size';

export interface Cluster {
  sign: 1 | -1;
  mass: number;
  size: number;
  /** point indices, ascending */
  points: number[];
}

/** Working memory for labelling, reused across permutations. */
export class ClusterWork {
  readonly uf: UnionFind;
  readonly sign: Int8Array;
  readonly mass: Float64Array;
  readonly active: Int32Array;
  readonly graph: AdjacencyLists;
  constructor(nPoints: number, edges: Int32Array) {
    this.graph = adjacencyLists(nPoints, edges);
    this.uf = new UnionFind(nPoints);
    this.sign = new Int8Array(nPoints);
    this.mass = new Float64Array(nPoints);
    this.active = new Int32Array(nPoints);
  }
}

/**
 * Unions supra-threshold points of one sign along the graph's edges; returns the number of such
 * points, listed in work.active (ascending), their signs in work.sign.
 */
function labelSupraThreshold(stat: Float64Array, threshold: number, work: ClusterWork): number {
  const { uf, sign, active } = work;
  const { start, neighbours } = work.graph;
  let nActive = 0;
  for (let p = 0; p < stat.length; p++) {
    const v = stat[p];
    const s = v > threshold ? 1 : v < -threshold ? -1 : 0;
    sign[p] = s;
    if (s !== 0) {
      uf.activate(p);
      active[nActive++] = p;
    }
  }
  if (nActive < 2) return nActive;
  for (let i = 0; i < nActive; i++) {
    const a = active[i];
    const sa = sign[a];
    for (let k = start[a]; k < start[a + 1]; k++) {
      const b = neighbours[k];
      if (b > a && sign[b] === sa) uf.union(a, b);
    }
  }
  return nActive;
}

/** Largest |cluster statistic| over both signs (the permutation null statistic); 0 without clusters. */
export function maxClusterStatistic(stat: Float64Array, threshold: number, measure: ClusterMeasure, work: ClusterWork): number {
  const nActive = labelSupraThreshold(stat, threshold, work);
  if (nActive === 0) return 0; // early exit: nothing passes the threshold
  const { uf, active, mass } = work;
  if (measure === 'size') {
    let best = 0;
    for (let i = 0; i < nActive; i++) {
      const r = uf.find(active[i]);
      if (uf.size[r] > best) best = uf.size[r];
    }
    return best;
  }
  for (let i = 0; i < nActive; i++) mass[uf.find(active[i])] = 0;
  // mass of a cluster = Σ_{p in cluster} stat(p)
  for (let i = 0; i < nActive; i++) {
    const p = active[i];
    mass[uf.find(p)] += stat[p];
  }
  let best = 0;
  for (let i = 0; i < nActive; i++) {
    const p = active[i];
    if (uf.parent[p] === p && Math.abs(mass[p]) > best) best = Math.abs(mass[p]);
  }
  return best;
}

/** All clusters of the statistic map, largest |mass| first. */
export function findClusters(stat: Float64Array, threshold: number, work: ClusterWork): Cluster[] {
  const nActive = labelSupraThreshold(stat, threshold, work);
  const byRoot = new Map<number, Cluster>();
  for (let i = 0; i < nActive; i++) {
    const p = work.active[i];
    const r = work.uf.find(p);
    let c = byRoot.get(r);
    if (!c) {
      c = { sign: work.sign[p] > 0 ? 1 : -1, mass: 0, size: 0, points: [] };
      byRoot.set(r, c);
    }
    c.mass += stat[p];
    c.size += 1;
    c.points.push(p);
  }
  return [...byRoot.values()].sort((a, b) => Math.abs(b.mass) - Math.abs(a.mass));
}
