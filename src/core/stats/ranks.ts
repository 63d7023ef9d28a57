/**
 * Ranks 1…n with ties given the average of the ranks they span (the "average" method of
 * scipy.stats.rankdata), used for Spearman's correlation.
 */
export function averageRanks(values: ArrayLike<number>): Float64Array {
  const n = values.length;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => values[a] - values[b]);
  const ranks = new Float64Array(n);
  let i = 0;
  while (i < n) {
    let j = i;
    while (j + 1 < n && values[order[j + 1]] === values[order[i]]) j++;
    // positions i…j (0-based) share the mean rank ((i + 1) + (j + 1))/2
    const r = (i + j + 2) / 2;
    for (let k = i; k <= j; k++) ranks[order[k]] = r;
    i = j + 1;
  }
  return ranks;
}
