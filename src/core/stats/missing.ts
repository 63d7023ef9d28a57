/**
 * Missing values per point (NaN in the data: a subject without a value at that channel × bin,
 * e.g. no fitted peak in a band on one channel). Each point's statistic uses the subjects with a
 * value there; permutations relabel whole subjects, so a subject carries its missing values
 * with it and the exchangeability of the design is unchanged (Winkler et al. 2014, NeuroImage
 * 92:381–397, on exchangeable units). A point with fewer values than a whole contrast needs
 * (3 subjects; 2 per group in a two-group design) is left out: its statistic is 0 in the
 * observed data and in every permutation, so it never joins a cluster, and the result reports
 * it as null with its counts.
 */

/** Smallest number of values a point needs: per group (two groups) and in all. */
export const MIN_PER_GROUP = 2;
export const MIN_IN_ALL = 3;

export interface MissingSummary {
  /** values per point: [group 0, group 1] for two groups, else one row */
  counts: Int32Array[];
  /** 1 where the point has enough values, 0 where it is left out */
  keep: Uint8Array;
  /** number of NaN values in the data */
  missing: number;
}

/** Counts the values per point (rows of `data` are subjects; labels: 0/1 group per subject, or null). */
export function countValues(data: ArrayLike<number>, n: number, P: number, labels: ArrayLike<number> | null): MissingSummary {
  const counts = labels ? [new Int32Array(P), new Int32Array(P)] : [new Int32Array(P)];
  let missing = 0;
  for (let s = 0; s < n; s++) {
    const c = counts[labels ? labels[s] : 0];
    for (let p = 0; p < P; p++) {
      if (Number.isNaN(data[s * P + p])) missing++;
      else c[p]++;
    }
  }
  const keep = new Uint8Array(P);
  for (let p = 0; p < P; p++) {
    const all = labels ? counts[0][p] + counts[1][p] : counts[0][p];
    keep[p] = all >= MIN_IN_ALL && (!labels || (counts[0][p] >= MIN_PER_GROUP && counts[1][p] >= MIN_PER_GROUP)) ? 1 : 0;
  }
  return { counts, keep, missing };
}

/** The minimum in words, for notes and the result. */
export function minimumText(twoGroups: boolean): string {
  return twoGroups ? `at least ${MIN_PER_GROUP} values per group and ${MIN_IN_ALL} in all` : `at least ${MIN_IN_ALL} values`;
}
