/**
 * Relabellings for permutation tests, one per permutation index, so that a permutation depends
 * only on (seed, index) and any range of indices can run on its own thread with identical results.
 *
 * Schemes (Winkler et al. 2014, NeuroImage 92:381–397, for the exchangeability terms):
 * - `relabel`: two independent groups; the relabelling is the 0/1 group label of every subject,
 *   with the group sizes kept. Exact: all C(n, n1) choices of group 1 in lexicographic order.
 * - `sign-flip`: paired differences or one-sample data; the relabelling is a sign ±1 per subject.
 *   Exact: all 2^n sign vectors, subject j's sign from bit j of the index (index 0 = all +1).
 * - `permute-rows`: covariate permutation or Freedman–Lane residual permutation; the relabelling
 *   is a permutation π of the rows (row j takes row π(j)). Exact: all n! permutations in
 *   lexicographic order (index 0 = identity).
 * In random mode, permutation i uses a generator seeded from mixSeed(seed, i): for `relabel` and
 * `permute-rows` a Fisher–Yates shuffle of the identity; for `sign-flip` a fair coin per subject.
 */
import { Random } from './random.ts';

export type RelabellingKind = 'relabel' | 'sign-flip' | 'permute-rows';

export interface RelabellingScheme {
  kind: RelabellingKind;
  /** number of subjects (rows) */
  n: number;
  /** observed 0/1 group labels (`relabel` only) */
  labels?: Uint8Array;
  /** true: index i enumerates every relabelling; false: random relabellings from the seed */
  exact: boolean;
  /** number of permutations run: all relabellings in exact mode, else the requested number */
  count: number;
  seed: number;
}

/** Binomial coefficient C(n, k) as a double (exact below 2^53; Infinity when it overflows). */
export function binomial(n: number, k: number): number {
  if (k < 0 || k > n) return 0;
  const m = Math.min(k, n - k);
  let c = 1;
  for (let i = 1; i <= m; i++) c = (c * (n - m + i)) / i;
  return Math.round(c);
}

/** Number of distinct relabellings of a scheme (may be Infinity for large n). */
export function relabellingCount(kind: RelabellingKind, n: number, labels?: Uint8Array): number {
  if (kind === 'sign-flip') return Math.pow(2, n);
  if (kind === 'permute-rows') {
    let f = 1;
    for (let i = 2; i <= n; i++) f *= i;
    return f;
  }
  let n1 = 0;
  for (let j = 0; j < n; j++) n1 += labels![j];
  return binomial(n, n1);
}

/**
 * Scheme for a design: exact enumeration when the number of distinct relabellings is at most the
 * requested number of permutations, else `requested` random relabellings.
 */
export function makeScheme(kind: RelabellingKind, n: number, requested: number, seed: number, labels?: Uint8Array): RelabellingScheme {
  if (!Number.isInteger(requested) || requested < 1) throw new RangeError(`permutations must be a positive integer, got ${requested}`);
  if (!Number.isFinite(seed)) throw new RangeError(`seed must be a finite number, got ${seed}`);
  const total = relabellingCount(kind, n, labels);
  const exact = total <= requested;
  return { kind, n, labels, exact, count: exact ? total : requested, seed };
}

/** 32-bit seed of permutation i: murmur3's fmix32 finaliser of seed + i·golden ratio (bijective in i). */
export function mixSeed(seed: number, i: number): number {
  let h = ((Math.trunc(seed) >>> 0) + Math.imul(i + 1, 0x9e3779b9)) >>> 0;
  h = Math.imul(h ^ (h >>> 16), 0x85ebca6b) >>> 0;
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35) >>> 0;
  return (h ^ (h >>> 16)) >>> 0;
}

/**
 * Writes relabelling number `index` of the scheme into `out` (length n): group labels 0/1,
 * signs ±1, or the row permutation, depending on the kind. `work` is scratch of length n.
 */
export function relabelling(scheme: RelabellingScheme, index: number, out: Int32Array, work: Int32Array): void {
  const n = scheme.n;
  if (scheme.kind === 'sign-flip') {
    if (scheme.exact) {
      for (let j = 0; j < n; j++) out[j] = Math.floor(index / Math.pow(2, j)) % 2 === 1 ? -1 : 1;
    } else {
      const rng = new Random(mixSeed(scheme.seed, index));
      for (let j = 0; j < n; j++) out[j] = rng.uniform() < 0.5 ? -1 : 1;
    }
    return;
  }
  if (scheme.kind === 'permute-rows') {
    if (scheme.exact) unrankPermutation(index, n, out, work);
    else {
      for (let j = 0; j < n; j++) out[j] = j;
      new Random(mixSeed(scheme.seed, index)).shuffle(out);
    }
    return;
  }
  const labels = scheme.labels!;
  if (scheme.exact) {
    let n1 = 0;
    for (let j = 0; j < n; j++) n1 += labels[j];
    unrankSubset(index, n, n1, out);
  } else {
    // permuted labels L*(j) = L(π(j)) for a uniformly random permutation π
    for (let j = 0; j < n; j++) work[j] = j;
    new Random(mixSeed(scheme.seed, index)).shuffle(work);
    for (let j = 0; j < n; j++) out[j] = labels[work[j]];
  }
}

/** k-subset of {0…n−1} number `index` in lexicographic order, as 0/1 membership in `out`. */
function unrankSubset(index: number, n: number, k: number, out: Int32Array): void {
  let rest = index;
  let left = k;
  for (let j = 0; j < n; j++) {
    // subsets that contain j, given the choices so far: C(n − j − 1, left − 1)
    const withJ = left > 0 ? binomial(n - j - 1, left - 1) : 0;
    if (left > 0 && rest < withJ) {
      out[j] = 1;
      left--;
    } else {
      out[j] = 0;
      rest -= withJ;
    }
  }
}

/** Permutation number `index` of n items in lexicographic order (factorial number system). */
function unrankPermutation(index: number, n: number, out: Int32Array, pool: Int32Array): void {
  for (let j = 0; j < n; j++) pool[j] = j;
  let rest = index;
  let f = 1;
  for (let i = 2; i < n; i++) f *= i; // (n − 1)!
  let size = n;
  for (let j = 0; j < n; j++) {
    const digit = f > 0 ? Math.floor(rest / f) : 0;
    rest -= digit * f;
    out[j] = pool[digit];
    for (let m = digit; m < size - 1; m++) pool[m] = pool[m + 1];
    size--;
    if (size > 1) f /= size;
  }
}
