/**
 * The permutation loop: for permutation indices [from, to) of a scheme, relabel, compute the
 * point statistic, and keep the null maxima — the largest |cluster statistic| (both signs) and
 * the largest |TFCE score| of each permutation. Permutation i depends only on (seed, i) (see
 * relabelling.ts), so ranges run on different threads concatenate to the same null
 * distribution as one run: runPermutations(t, {0, m}) equals the concatenation of
 * runPermutations(t, {0, k}) and runPermutations(t, {k, m}).
 */
import type { PointStatistic } from './point-statistic.ts';
import { relabelling, type RelabellingScheme } from './relabelling.ts';
import { ClusterWork, maxClusterStatistic, type ClusterMeasure } from './clusters.ts';
import { TfceWork, tfceScores, type TfceParameters } from './tfce.ts';

export interface PermutationTest {
  kernel: PointStatistic;
  scheme: RelabellingScheme;
  /** point graph edge list (point-graph.ts) */
  edges: Int32Array;
  /** cluster-forming threshold |t| */
  threshold: number;
  clusterMeasure: ClusterMeasure | 'none';
  tfce: TfceParameters | null;
}

/** Null maxima of permutations [from, to), one value per permutation in index order. */
export interface NullMaxima {
  from: number;
  to: number;
  /** largest |cluster statistic| per permutation (null when no cluster statistic is used) */
  cluster: Float64Array | null;
  /** largest |TFCE score| per permutation (null without TFCE) */
  tfce: Float64Array | null;
}

export interface PermutationRange {
  from: number;
  to: number;
}

export type ProgressCallback = (done: number, total: number) => void;

export function runPermutations(test: PermutationTest, range: PermutationRange, onProgress?: ProgressCallback): NullMaxima {
  const { kernel, scheme } = test;
  const { from, to } = range;
  if (!Number.isInteger(from) || !Number.isInteger(to) || from < 0 || to > scheme.count || from > to) {
    throw new RangeError(`permutation range [${from}, ${to}) is outside [0, ${scheme.count})`);
  }
  const count = to - from;
  const P = kernel.nPoints;
  const n = kernel.nSubjects;
  const cluster = test.clusterMeasure === 'none' ? null : new Float64Array(count);
  const tfce = test.tfce ? new Float64Array(count) : null;
  const labels = new Int32Array(n);
  const work = new Int32Array(n);
  const stat = new Float64Array(P);
  const clusterWork = cluster ? new ClusterWork(P, test.edges) : null;
  const tfceWork = tfce ? new TfceWork(P, test.edges) : null;
  const score = tfce ? new Float64Array(P) : null;
  // TFCE needs t at every point; clusters alone only where |t| passes the threshold
  const screen = tfce ? null : test.threshold;
  const every = Math.max(1, Math.floor(count / 100));
  for (let i = from; i < to; i++) {
    relabelling(scheme, i, labels, work);
    kernel.computeNull(labels, stat, screen);
    if (cluster) cluster[i - from] = maxClusterStatistic(stat, test.threshold, test.clusterMeasure as ClusterMeasure, clusterWork!);
    if (tfce) tfce[i - from] = tfceScores(stat, test.tfce!, tfceWork!, score!);
    if (onProgress && ((i - from + 1) % every === 0 || i + 1 === to)) onProgress(i - from + 1, count);
  }
  return { from, to, cluster, tfce };
}

/** Joins partial runs (any order) into one run over their union, which must be contiguous. */
export function concatNullMaxima(parts: NullMaxima[]): NullMaxima {
  if (parts.length === 0) throw new RangeError('no partial permutation runs to join');
  const sorted = [...parts].sort((a, b) => a.from - b.from);
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i].from !== sorted[i - 1].to)
      throw new RangeError(`partial runs are not contiguous: [${sorted[i - 1].from}, ${sorted[i - 1].to}) then [${sorted[i].from}, ${sorted[i].to})`);
  }
  const join = (key: 'cluster' | 'tfce'): Float64Array | null => {
    if (sorted[0][key] === null) return null;
    const out = new Float64Array(sorted[sorted.length - 1].to - sorted[0].from);
    for (const part of sorted) out.set(part[key]!, part.from - sorted[0].from);
    return out;
  };
  return { from: sorted[0].from, to: sorted[sorted.length - 1].to, cluster: join('cluster'), tfce: join('tfce') };
}

/**
 * Permutation p-value of an observed |statistic| against null maxima.
 * Random mode (Phipson & Smyth 2010): the observed labelling counts as one permutation,
 *   p = (1 + b)/(1 + m), b = number of the m random permutations with null ≥ observed.
 * Exact mode: the m relabellings enumerate every relabelling, the observed one among them, so
 *   p = b/m exactly (b ≥ 1 because the observed relabelling is counted).
 * Floating-point ties (relative difference below 1e-9) count as "≥" (common practice).
 */
export function permutationP(observedAbs: number, nullMax: Float64Array, exact: boolean): number {
  const limit = observedAbs - 1e-9 * Math.abs(observedAbs);
  let b = 0;
  for (let i = 0; i < nullMax.length; i++) if (nullMax[i] >= limit) b++;
  return exact ? b / nullMax.length : (1 + b) / (1 + nullMax.length);
}
