/**
 * The modified-z limit that keeps the outlier rule's false-rejection rate at its stated value for
 * any number of epochs (pure).
 *
 * The rule z = |x − median|/(1.4826·MAD) > z0 (Iglewicz & Hoaglin 1993) removes a share
 * 2Φ(−z0) of Gaussian values only for large samples: with n values the MAD is itself uncertain
 * (about 37 % efficiency at the normal) and z has heavy tails, so a cut at z0 = 3.5 removes about
 * 1.7 % at n = 10, 1.1 % at n = 14, 0.27 % at n = 40 and 0.11 % at n = 100 instead of 0.047 %
 * (measured here and in the tests). The limit c_n used instead solves
 *   P(z > c_n) = 2Φ(−z0)   for one value of a Gaussian sample of n (any mean and SD),
 * so the stated rate holds at every n. (A small-sample consistency factor for the MAD, about
 * n/(n − 0.8) for n > 9 (Croux & Rousseeuw 1992, from memory), corrects the MAD's mean, not its
 * spread: with it the plain cut still removes 18× the stated share at n = 14, measured with
 * numpy; c_n makes it unnecessary.)
 *
 * Computing c_n. Let r be the other n − 1 values. As x moves out past the others the median and
 * the MAD stop depending on it: they become m₊, s₊ = median and 1.4826·MAD of r ∪ {+∞} (and m₋,
 * s₋ with −∞), and between, z ≤ 2/1.4826 < c_n (derivation here: the median is then an order
 * statistic of r or x itself, and the MAD an order statistic of the deviations or x's own). Hence
 *   P(z > c | r) = Φ(−(m₊ + c·s₊)) + Φ(m₋ − c·s₋)
 * exactly, and P(z > c) is its mean over r ~ N(0, 1)^{n−1}: a conditional Monte Carlo (Hammersley
 * & Handscomb 1964, "Monte Carlo Methods", §5.5) whose terms are probabilities, not 0/1 counts,
 * so a few thousand draws pin a tail of 10⁻⁴. c_n is found by bisection on log c. Draws come from
 * a fixed seed per n (deterministic); results are cached per (n, z0).
 */
import normalCdf from '@stdlib/stats-base-dists-normal-cdf';
import { Random } from '../stats/random.ts';

/** Consistency factor of the MAD for the normal SD, 1/Φ⁻¹(3/4) (Iglewicz & Hoaglin 1993). */
export const MAD_TO_SD = 1.4826;

/** Stated false-rejection rate of one outlier measure under Gaussian scatter: 2Φ(−z0). */
export function outlierRate(z0: number): number {
  if (!(z0 > 0)) throw new Error(`invalid outlier z: ${z0}`);
  return 2 * normalCdf(-z0, 0, 1);
}

/**
 * Draws of r: 4·10⁵/n, at most 40 000 and at least 100, so one c_n costs ~4·10⁵ normal values.
 * The spread of c_n between seeds (measured with numpy at this size): about 10 % at n = 5, 1.5 %
 * at n = 10 and 14, under 1 % from n = 40.
 */
function drawCount(n: number): number {
  return Math.max(100, Math.min(40_000, Math.ceil(4e5 / n)));
}

const SEED = 0x6f75746c; // fixed: c_n must not change between runs

/**
 * Median and 1.4826·MAD of the n values s[0 … n), sorted ascending, into out[at] and out[at + 1];
 * the same order statistics (and the same mean of the two middle ones for even n) as
 * medianInPlace takes. The deviations |s_i − median| fall up to the median and rise after it, so
 * their k smallest come from merging the two runs outward from the median.
 */
function sortedMedianAndSpread(s: Float64Array, n: number, out: Float64Array, at: number): void {
  const k = n >> 1;
  const med = n % 2 === 1 ? s[k] : 0.5 * (s[k - 1] + s[k]);
  let right = k; // first value above the median
  while (right > 0 && s[right - 1] > med) right--;
  while (right < n && s[right] <= med) right++;
  let left = right - 1;
  let previous = 0;
  let current = 0;
  for (let taken = 0; taken <= k; taken++) {
    const dl = left >= 0 ? Math.abs(s[left] - med) : Infinity;
    const dr = right < n ? Math.abs(s[right] - med) : Infinity;
    previous = current;
    if (dl <= dr) {
      current = dl;
      left--;
    } else {
      current = dr;
      right++;
    }
  }
  out[at] = med;
  out[at + 1] = MAD_TO_SD * (n % 2 === 1 ? current : 0.5 * (previous + current));
}

/**
 * m₊, s₊, m₋, s₋ of each draw (formula above), four per draw. The n − 1 draws are sorted once,
 * between the −∞ and +∞ slots of one buffer: r ∪ {+∞} and {−∞} ∪ r are then its two sorted windows.
 */
function conditionalTerms(n: number): Float64Array {
  const R = drawCount(n);
  const rng = new Random(SEED + n);
  const terms = new Float64Array(4 * R);
  const s = new Float64Array(n + 1);
  const r = s.subarray(1, n);
  const withPlus = s.subarray(1);
  s[0] = -Infinity;
  s[n] = Infinity;
  for (let d = 0; d < R; d++) {
    for (let i = 0; i < n - 1; i++) r[i] = rng.normal();
    r.sort();
    sortedMedianAndSpread(withPlus, n, terms, 4 * d);
    sortedMedianAndSpread(s, n, terms, 4 * d + 2);
  }
  return terms;
}

/** Φ(−u) for u beyond this is below 10⁻¹⁷: left out of the sums (common practice). */
const NEGLIGIBLE_Z = 8.5;

/**
 * P(z > c) = mean over draws of Φ(−u₊) + Φ(−u₋), u₊ = m₊ + c·s₊, u₋ = c·s₋ − m₋, and its
 * derivative in ln c: −c·mean(φ(u₊)·s₊ + φ(u₋)·s₋).
 */
function exceedance(terms: Float64Array, c: number): { p: number; dLogC: number } {
  let sum = 0;
  let slope = 0;
  for (let i = 0; i < terms.length; i += 4) {
    const up = terms[i] + c * terms[i + 1];
    const down = c * terms[i + 3] - terms[i + 2];
    if (up < NEGLIGIBLE_Z) {
      sum += normalCdf(-up, 0, 1);
      slope += Math.exp(-0.5 * up * up) * terms[i + 1];
    }
    if (down < NEGLIGIBLE_Z) {
      sum += normalCdf(-down, 0, 1);
      slope += Math.exp(-0.5 * down * down) * terms[i + 3];
    }
  }
  const R = terms.length / 4;
  return { p: sum / R, dLogC: (-c * slope) / (Math.sqrt(2 * Math.PI) * R) };
}

const cache = new Map<string, number>();

/**
 * c_n: the modified-z limit at which a Gaussian sample of n values loses the share 2Φ(−z0) of
 * its values (formula above). n ≥ 5 (fewer is too few for a median and MAD).
 */
export function outlierCriticalZ(n: number, z0: number): number {
  if (!Number.isInteger(n) || n < 5) throw new Error(`invalid number of epochs for the outlier limit: ${n} (at least 5)`);
  // z ≤ 2/1.4826 between the regions of the derivation: it holds for limits of 2 and more
  if (!(z0 >= 2)) throw new Error(`invalid outlier z: ${z0} (at least 2; 2 already removes 4.6 % of clean epochs)`);
  const key = `${n}|${z0}`;
  const hit = cache.get(key);
  if (hit !== undefined) return hit;
  const target = outlierRate(z0);
  if (target === 0) return Infinity; // z0 beyond ~38: 2Φ(−z0) underflows, the rule removes nothing
  const terms = conditionalTerms(n);
  // Newton on y = ln c for ln P(e^y) = ln target (nearly linear in y), kept inside a bracket
  // [lo, hi] that shrinks with every step and bisected when a step would leave it
  let lo = Math.log(z0 / 2);
  let hi = Math.log(1000 * z0);
  let y = Math.log(z0);
  for (let it = 0; it < 60 && hi - lo > 1e-6; it++) {
    const { p, dLogC } = exceedance(terms, Math.exp(y));
    if (p > target) lo = y;
    else hi = y;
    const step = p > 0 && dLogC < 0 ? (Math.log(p) - Math.log(target)) / (dLogC / p) : NaN;
    const next = y - step;
    if (Math.abs(step) < 1e-4) break; // c to 0.01 %, far below the Monte Carlo error
    y = next > lo && next < hi ? next : 0.5 * (lo + hi);
  }
  const c = Math.exp(y);
  cache.set(key, c);
  return c;
}
