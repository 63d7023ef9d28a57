/**
 * The contract between a design's point statistic and the permutation engine: one object holds
 * the prepared data of a design, and `compute` gives the statistic at every point for one
 * relabelling (see relabelling.ts for what the Int32Array means per scheme). The observed
 * statistic is `compute` with the observed relabelling, so observed and null share one kernel.
 */
import type { RelabellingKind } from './relabelling.ts';

export interface PointStatistic {
  /** points = channels × frequencies */
  readonly nPoints: number;
  /** subjects (rows) */
  readonly nSubjects: number;
  /** how the design is permuted */
  readonly scheme: RelabellingKind;
  /** degrees of freedom of the design, used for the cluster-forming threshold */
  readonly df: number;
  /** the relabelling that reproduces the observed data */
  observedRelabelling(): Int32Array;
  /**
   * Statistic (a t value) per point for the relabelling, written into `stat`; when `df` is given,
   * the degrees of freedom per point are written too (per-point Welch–Satterthwaite df for
   * Welch's t, the design df otherwise).
   */
  compute(relabelling: Int32Array, stat: Float64Array, df?: Float64Array): void;
  /**
   * The statistic of a permutation for the null distribution. With threshold = null it equals
   * `compute`. With a threshold (cluster test without TFCE), points with |t| > threshold get their
   * exact t, and other points may get any value of magnitude ≤ threshold (0), which lets a kernel
   * skip work there (two-group-t.ts).
   */
  computeNull(relabelling: Int32Array, stat: Float64Array, threshold: number | null): void;
}
