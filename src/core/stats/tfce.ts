/**
 * Threshold-free cluster enhancement (Smith & Nichols 2009, NeuroImage 44:83–98):
 *   TFCE(p) = ∫_0^{stat(p)} e(h)^E · h^H dh,
 * e(h) = extent (number of points) of the cluster that contains p when the map is thresholded
 * at h, over the same point graph as the cluster test. Defaults E = 0.5, H = 2. The integral is
 * the sum over the levels h_k = k·dh (k = 1, 2, … while h_k ≤ |stat(p)|) of e(h_k)^E·h_k^H·dh,
 * with a fixed step dh in units of the statistic (default 0.1), the same for observed and
 * permuted maps. Positive and negative parts are enhanced separately (the negative part on
 * −stat); the score of a negative point is negative.
 *
 * Levels are visited from the top down and points join a union-find as the level falls below
 * their value, so each edge is united once; at each level every active point adds its
 * cluster's term.
 */
import { UnionFind } from './union-find.ts';

export interface TfceParameters {
  /** extent exponent E (default 0.5) */
  E: number;
  /** height exponent H (default 2) */
  H: number;
  /** integration step dh in units of the statistic (default 0.1) */
  dh: number;
}

export const TFCE_DEFAULTS: TfceParameters = { E: 0.5, H: 2, dh: 0.1 };

/** Working memory for TFCE, reused across permutations. */
export class TfceWork {
  readonly uf: UnionFind;
  readonly level: Int32Array;
  readonly order: Int32Array;
  readonly activeMark: Uint8Array;
  readonly adjStart: Int32Array;
  readonly adj: Int32Array;

  constructor(nPoints: number, edges: Int32Array) {
    this.uf = new UnionFind(nPoints);
    this.level = new Int32Array(nPoints);
    this.order = new Int32Array(nPoints);
    this.activeMark = new Uint8Array(nPoints);
    // adjacency lists (compressed rows) from the edge list
    const degree = new Int32Array(nPoints + 1);
    for (let e = 0; e < edges.length; e++) degree[edges[e] + 1]++;
    for (let p = 0; p < nPoints; p++) degree[p + 1] += degree[p];
    this.adjStart = degree;
    this.adj = new Int32Array(edges.length);
    const fill = degree.slice(0, nPoints);
    for (let e = 0; e < edges.length; e += 2) {
      this.adj[fill[edges[e]]++] = edges[e + 1];
      this.adj[fill[edges[e + 1]]++] = edges[e];
    }
  }
}

/** Enhances one sign (sign = +1: stat > 0; −1: stat < 0) and adds the signed score into `score`. */
function enhanceSign(stat: Float64Array, sign: 1 | -1, params: TfceParameters, work: TfceWork, score: Float64Array): void {
  const { uf, level, order, activeMark, adjStart, adj } = work;
  const { E, H, dh } = params;
  const P = stat.length;
  let nPos = 0;
  let top = 0;
  for (let p = 0; p < P; p++) {
    const v = sign * stat[p];
    const k = v > 0 ? Math.floor(v / dh + 1e-9) : 0; // number of levels h_k ≤ v
    level[p] = k;
    activeMark[p] = 0;
    if (k > 0) {
      order[nPos++] = p;
      if (k > top) top = k;
    }
  }
  if (nPos === 0) return;
  // points by descending level (counting sort would do; the list is short and sort is clear)
  const sorted = Array.from(order.subarray(0, nPos)).sort((a, b) => level[b] - level[a]);
  let next = 0;
  const active: number[] = [];
  for (let k = top; k >= 1; k--) {
    while (next < nPos && level[sorted[next]] >= k) {
      const p = sorted[next++];
      uf.activate(p);
      activeMark[p] = 1;
      active.push(p);
      for (let i = adjStart[p]; i < adjStart[p + 1]; i++) if (activeMark[adj[i]]) uf.union(p, adj[i]);
    }
    // term of level h_k: e(h_k)^E · h_k^H · dh, for every point of every cluster at this level
    const h = k * dh;
    const hTerm = Math.pow(h, H) * dh;
    for (let i = 0; i < active.length; i++) {
      const p = active[i];
      score[p] += sign * Math.pow(uf.size[uf.find(p)], E) * hTerm;
    }
  }
}

/** Signed TFCE score per point into `score`; returns max |score| (the permutation null statistic). */
export function tfceScores(stat: Float64Array, params: TfceParameters, work: TfceWork, score: Float64Array): number {
  score.fill(0);
  enhanceSign(stat, 1, params, work, score);
  enhanceSign(stat, -1, params, work, score);
  let best = 0;
  for (let p = 0; p < score.length; p++) if (Math.abs(score[p]) > best) best = Math.abs(score[p]);
  return best;
}
