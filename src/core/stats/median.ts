/**
 * Median of an array in place, by selection rather than sorting: Hoare's FIND (Hoare 1961,
 * CACM 4:321) in Wirth's form (Wirth 1976, "Algorithms + Data Structures = Programs", §2.3.4),
 * O(n) on average. The array is reordered. For an even count the median is the mean of the two
 * middle values (as numpy.median). NaN for an empty array; values must not be NaN.
 */
export function medianInPlace(a: Float64Array): number {
  const n = a.length;
  if (n === 0) return NaN;
  const k = n >> 1;
  const upper = selectInPlace(a, k);
  if (n % 2 === 1) return upper;
  // after the selection every a[i], i < k, is ≤ a[k]: the lower middle value is their maximum
  let lower = a[0];
  for (let i = 1; i < k; i++) if (a[i] > lower) lower = a[i];
  return 0.5 * (lower + upper);
}

/** Puts the k-th smallest value (0-based) at a[k], smaller ones before it, larger ones after; returns it. */
export function selectInPlace(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (lo < hi) {
    const pivot = a[k];
    let i = lo;
    let j = hi;
    do {
      while (a[i] < pivot) i++;
      while (pivot < a[j]) j--;
      if (i <= j) {
        const t = a[i];
        a[i] = a[j];
        a[j] = t;
        i++;
        j--;
      }
    } while (i <= j);
    if (j < k) lo = i;
    if (k < i) hi = j;
  }
  return a[k];
}
