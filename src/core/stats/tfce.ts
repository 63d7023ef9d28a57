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
 * their value, so each edge is united once. The per-level terms are added to cluster roots only:
 * acc[root] += e^E·h^H·dh, and when root b is linked under root a, acc[b] −= acc[a], so that a
 * point's score is always the sum of acc along its path to the root (an offset union-find;
 * union by size without path compression keeps paths O(log n) and the offsets valid).
 */
import { adjacencyLists } from './point-graph.ts';

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
  readonly parent: Int32Array;
  readonly size: Int32Array;
  readonly acc: Float64Array;
  readonly level: Int32Array;
  readonly sorted: Int32Array;
  readonly activeMark: Uint8Array;
  readonly adjStart: Int32Array;
  readonly adj: Int32Array;
  /** extentPower[e] = e^E for the E in use */
  private extentPower = new Float64Array(0);
  private extentPowerE = NaN;
  levelStart = new Int32Array(64);

  constructor(nPoints: number, edges: Int32Array) {
    this.parent = new Int32Array(nPoints);
    this.size = new Int32Array(nPoints);
    this.acc = new Float64Array(nPoints);
    this.level = new Int32Array(nPoints);
    this.sorted = new Int32Array(nPoints);
    this.activeMark = new Uint8Array(nPoints);
    const lists = adjacencyLists(nPoints, edges);
    this.adjStart = lists.start;
    this.adj = lists.neighbours;
  }

  powers(E: number): Float64Array {
    if (E !== this.extentPowerE) {
      this.extentPower = Float64Array.from({ length: this.level.length + 1 }, (_, e) => Math.pow(e, E));
      this.extentPowerE = E;
    }
    return this.extentPower;
  }

  root(p: number): number {
    while (this.parent[p] !== p) p = this.parent[p];
    return p;
  }

  /** union by size; the child root's offset becomes relative to its new parent */
  union(a: number, b: number): void {
    let ra = this.root(a);
    let rb = this.root(b);
    if (ra === rb) return;
    if (this.size[ra] < this.size[rb]) {
      const t = ra;
      ra = rb;
      rb = t;
    }
    this.parent[rb] = ra;
    this.size[ra] += this.size[rb];
    this.acc[rb] -= this.acc[ra];
  }
}

/** Enhances one sign (sign = +1: stat > 0; −1: stat < 0) and adds the signed score into `score`. */
function enhanceSign(stat: Float64Array, sign: 1 | -1, params: TfceParameters, work: TfceWork, score: Float64Array): void {
  const { parent, size, acc, level, sorted, activeMark, adjStart, adj } = work;
  const { H, dh } = params;
  const extentPower = work.powers(params.E);
  const P = stat.length;
  let nPos = 0;
  let top = 0;
  for (let p = 0; p < P; p++) {
    const v = sign * stat[p];
    const k = v > 0 ? Math.floor(v / dh + 1e-9) : 0; // number of levels h_k ≤ v
    level[p] = k;
    activeMark[p] = 0;
    if (k > 0) {
      nPos++;
      if (k > top) top = k;
    }
  }
  if (nPos === 0) return;
  // counting sort of the points by descending level
  if (work.levelStart.length < top + 2) work.levelStart = new Int32Array(2 * top + 2);
  const start = work.levelStart;
  start.fill(0, 0, top + 2);
  for (let p = 0; p < P; p++) if (level[p] > 0) start[top - level[p] + 1]++;
  for (let k = 1; k <= top + 1; k++) start[k] += start[k - 1];
  for (let p = 0; p < P; p++) if (level[p] > 0) sorted[start[top - level[p]]++] = p;
  let nActive = 0;
  for (let k = top; k >= 1; k--) {
    while (nActive < nPos && level[sorted[nActive]] >= k) {
      const p = sorted[nActive++];
      parent[p] = p;
      size[p] = 1;
      acc[p] = 0;
      activeMark[p] = 1;
      for (let i = adjStart[p]; i < adjStart[p + 1]; i++) if (activeMark[adj[i]]) work.union(p, adj[i]);
    }
    // term of level h_k, e(h_k)^E · h_k^H · dh, added once per cluster (at its root)
    const hTerm = Math.pow(k * dh, H) * dh;
    for (let i = 0; i < nActive; i++) {
      const p = sorted[i];
      if (parent[p] === p) acc[p] += extentPower[size[p]] * hTerm;
    }
  }
  // score(p) = Σ acc along the path from p to its root
  for (let i = 0; i < nPos; i++) {
    let p = sorted[i];
    let total = 0;
    for (;;) {
      total += acc[p];
      if (parent[p] === p) break;
      p = parent[p];
    }
    score[sorted[i]] += sign * total;
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
