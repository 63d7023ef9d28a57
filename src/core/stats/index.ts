/**
 * Statistics engine: mass-univariate tests over channels × frequencies with cluster-based
 * permutation (Maris & Oostenveld 2007) and TFCE (Smith & Nichols 2009). Pure computation — no
 * I/O — so it runs in Node (command line) and in a browser Web Worker (dashboard).
 *
 * One call: runPermutationTest(input, options, onProgress?) → PermutationTestResult (JSON-able).
 * Split over threads: preparePermutationTest(input, options) on every thread (deterministic), each
 * thread runPermutations(prepared.test, {from, to}), then
 * finishPermutationTest(prepared, concatNullMaxima(parts)) — identical to runPermutationTest for
 * the same seed, because permutation i depends only on (seed, i).
 *
 * Data layout: `data` is a subjects × points matrix, row-major, with points = channels × frequency
 * bins and point index = channel·nFreqs + bin (channel-major), i.e. data[s·P + c·F + f].
 *
 * Signs: every difference is group 1 minus group 0 (groups[1] − groups[0]); paired designs are
 * second − first; correlations are positive when the measure rises with the covariate.
 *
 * Statistics and their permutation schemes:
 *   design       statistic                 permuted by                    threshold df
 *   groups       welch-t (default)         relabelling, sizes kept        n − 2 (see below)
 *   groups       student-t                 relabelling                    n − 2
 *   paired       paired-t (second − first) sign flips of the differences  n − 1
 *   one-sample   one-sample-t (vs 0)       sign flips                     n − 1
 *   covariate    pearson / spearman → t    covariate permutation          n − 2
 *   groups or covariate with nuisance
 *                linear-model-t            Freedman–Lane residual perm.   n − 2 − k
 * (k nuisance covariates; an intercept is always in the model; for groups with nuisance the
 * effect of interest is the 0/1 group indicator, so β is the adjusted difference.)
 *
 * Cluster-forming threshold: |t| > t_{1 − clusterP/2}(df) (two-tailed, default clusterP 0.05).
 * For Welch's t the df differ per point and per permutation; we use df = n − 2 (the pooled df)
 * for the threshold, fixed for all points and permutations, so observed and null clusters follow
 * one rule (the permutation p stays valid for any fixed threshold). The per-point Welch–
 * Satterthwaite df are reported and used for the uncorrected p-values.
 * A point whose standard error is 0 (no variance) gets t = 0; a correlation of exactly ±1 gives
 * t = ±Infinity (null in JSON).
 *
 * Missing values (input.allowMissing): NaN in `data` marks a subject without a value at that
 * point; each point's statistic and effect use the subjects with a value there (missing.ts),
 * for two groups (welch-t, student-t), paired-t and one-sample-t. A point with too few values
 * is left out: null statistic, p and effect, never in a cluster; result.missing says how many
 * values each point rests on. Data without a NaN take the complete-data kernels unchanged.
 *
 * Memory: the two-group statistic keeps subset-sum tables of up to 160 MB (two-group-t.ts), at
 * least twice the data size.
 */
import type { EffectSize } from './effect-size.ts';

export type Matrix = Float32Array | Float64Array;

export interface NuisanceColumn {
  /** covariate name, as in the participants table (age, sex…) */
  name: string;
  /** one value per subject (row of `data`); categorical covariates coded numerically */
  values: ArrayLike<number>;
}

/** Two independent groups: group[s] ∈ {0, 1} per subject (row of `data`). */
export interface GroupsDesign {
  kind: 'groups';
  group: ArrayLike<number>;
  /** names of group 0 and group 1 (groups[0], groups[1] of the contrast), for the result */
  groupNames?: [string, string];
  nuisance?: NuisanceColumn[];
}

/** Within-subject: `data` holds the first condition, `second` the second (same rows, same subjects). */
export interface PairedDesign {
  kind: 'paired';
  second: Matrix;
  conditionNames?: [string, string];
}

/** One sample against zero (e.g. data already differences). */
export interface OneSampleDesign {
  kind: 'one-sample';
}

/** Correlation with a numeric covariate, one value per subject. */
export interface CovariateDesign {
  kind: 'covariate';
  covariate: ArrayLike<number>;
  covariateName?: string;
  nuisance?: NuisanceColumn[];
}

export type Design = GroupsDesign | PairedDesign | OneSampleDesign | CovariateDesign;

export interface PermutationTestInput {
  /** channel names, in the order of the point layout */
  channels: string[];
  /** frequency of each bin, Hz, ascending */
  freqsHz: number[];
  /** subjects × (channels × freqs), row-major (see the layout above) */
  data: Matrix;
  design: Design;
  /**
   * channel neighbour graph (montage/adjacency.ts), symmetric, indices into `channels`;
   * omitted: Delaunay neighbours of the 10-10 positions when there are ≥ 2 channels;
   * null: no spatial adjacency (frequency-only clusters, e.g. a channel average).
   */
  channelNeighbours?: number[][] | null;
  /** NaN in `data` (and design.second) marks a missing value, omitted per point (default: NaN is an error) */
  allowMissing?: boolean;
}

export type StatisticName = 'welch-t' | 'student-t' | 'paired-t' | 'one-sample-t' | 'pearson' | 'spearman' | 'linear-model-t';

export interface PermutationTestOptions {
  /** groups: 'welch-t' (default) or 'student-t'; covariate: 'pearson' (default) or 'spearman';
   * with nuisance covariates only 'linear-model-t' (the default then) */
  statistic?: StatisticName;
  /** requested permutations (default 1000); exact enumeration when there are no more relabellings than this */
  permutations?: number;
  /** seed of the permutation generator (default 1) */
  seed?: number;
  /** two-tailed cluster-forming p (default 0.05) */
  clusterP?: number;
  /** cluster statistic: 'mass' (default, Σ t), 'size' (number of points) or 'none' (no clusters) */
  clusterMeasure?: 'mass' | 'size' | 'none';
  /** join neighbouring frequency bins in clusters (default true) */
  frequencyAdjacency?: boolean;
  /** TFCE on the same graph: true for E = 0.5, H = 2, dh = 0.1, or the parameters (default off) */
  tfce?: boolean | { E?: number; H?: number; dh?: number };
  /** confidence level of effect-size intervals (default 0.95) */
  confidenceLevel?: number;
}

export interface ClusterResult {
  /** +1: group 1 > group 0 (positive t); −1: below */
  sign: 1 | -1;
  /** Σ t over the cluster's points (negative for negative clusters) */
  mass: number;
  /** number of points (channel × bin) */
  size: number;
  /** permutation p of |mass| (or size) against the null maxima */
  p: number;
  fminHz: number;
  fmaxHz: number;
  /** channels that take part, in channel order */
  channels: string[];
  /** point indices (channel·nFreqs + bin), ascending */
  points: number[];
}

export interface EffectResult {
  kind: EffectSize['kind'];
  value: number[];
  ciLow: number[];
  ciHigh: number[];
  level: number;
  /** mean difference (groups[1] − groups[0], second − first, mean) or model coefficient; null for r */
  difference: number[] | null;
}

export interface PermutationTestResult {
  design: Design['kind'];
  statistic: StatisticName;
  nSubjects: number;
  /** subjects in group 0 and group 1 (groups designs only) */
  nPerGroup: [number, number] | null;
  groupNames: [string, string] | null;
  nuisance: string[];
  channels: string[];
  freqsHz: number[];
  /** t per point (correlations: t of r with n − 2 df) */
  stat: number[];
  /** df of the statistic: per point for Welch's t, else the design df */
  df: number | number[];
  /** two-tailed p per point from the t distribution with `df` */
  pUncorrected: number[];
  effect: EffectResult;
  clusterMeasure: 'mass' | 'size' | 'none';
  /** clusters, smallest p first (then largest |mass|) */
  clusters: ClusterResult[];
  tfce?: { score: number[]; pCorrected: number[]; E: number; H: number; dh: number };
  /** permutations used (all relabellings when exact) */
  permutations: number;
  exact: boolean;
  seed: number;
  threshold: { p: number; t: number; df: number };
  frequencyAdjacency: boolean;
  /** channel neighbour graph used (null: none) */
  channelNeighbours: number[][] | null;
  /** the p-value rule, in words, for the methods text */
  pValueRule: string;
  /** only when the data had missing values: how many values each point rests on, and the points left out */
  missing?: MissingResult;
}

export interface MissingResult {
  /** values per point: [group 0, group 1] for two groups, else one row (subjects, or pairs) */
  nPerPoint: number[][];
  /** indices of the points left out (too few values): null statistic, p and effect */
  leftOut: number[];
  /** the minimum a point needs, in words */
  minimum: string;
}

export {
  runPermutationTest,
  preparePermutationTest,
  dataVary,
  finishPermutationTest,
  PermutationTestInputError,
  type PreparedPermutationTest,
} from './permutation-test.ts';
export {
  runPermutations,
  concatNullMaxima,
  permutationP,
  type NullMaxima,
  type PermutationRange,
  type PermutationTest,
  type ProgressCallback,
} from './permutation-engine.ts';
export { tCdf, tQuantile, normalQuantile, twoTailedP, twoTailedCriticalT, fisherZ, fisherZInverse, correlationToT } from './distributions.ts';
export { TFCE_DEFAULTS, type TfceParameters } from './tfce.ts';
