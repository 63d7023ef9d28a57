/**
 * Epoch rejection per channel (pure). Two passes:
 *  1. time domain, epoch by epoch (`timeDomainCheck`): 'amplitude' when the peak-to-peak
 *     amplitude exceeds maxPeakToPeakUv (default 500 µV, common practice for sleep EEG), 'flat'
 *     when the SD is below flatSdUv (default 0.5 µV, common practice) or the longest run of
 *     identical consecutive samples lasts at least flatRunS (default 1 s: live EEG never holds one
 *     value that long; our choice).
 *  2. spectral outliers within the same stage and channel (`spectralOutliers`), over the epochs
 *     that passed step 1, for x = log10 broadband power (default 0.5–45 Hz) → 'broadband-outlier'
 *     and x = log10 high-frequency power (default 25–45 Hz, the muscle range) → 'muscle-outlier'.
 *     The modified z = |x − median| / (1.4826 · MAD) (Iglewicz & Hoaglin 1993, "How to Detect and
 *     Handle Outliers", ASQC; 1.4826 = 1/Φ⁻¹(3/4) makes the MAD a consistent SD estimate for
 *     normal data) rejects an epoch when
 *         |x − median| > max(c_n · 1.4826 · MAD,  z0 · σ_s),
 *     z0 = outlierZ (default 3.5). c_n (outlier-limit.ts) is the limit at which n Gaussian values
 *     lose the share 2Φ(−z0) (0.047 % at 3.5), as a known SD would: with few epochs the MAD is
 *     small by chance often enough that a plain cut at z0 removes 20–40× that share. σ_s
 *     (log-power-spread.ts) is the sampling sd of the epoch's log10 band power that Welch's
 *     estimator itself implies: no epoch is rejected for a difference the estimator's own noise
 *     explains at z0, however tightly the other epochs happen to cluster.
 * An epoch gets one reason per channel, the first rule it breaks in the order amplitude, flat,
 * muscle-outlier, broadband-outlier (muscle is the more specific finding of the two outliers).
 */
import { medianInPlace } from '../stats/median.ts';
import { MAD_TO_SD, outlierCriticalZ } from './outlier-limit.ts';

export type RejectionReason = 'amplitude' | 'flat' | 'broadband-outlier' | 'muscle-outlier';

export interface RejectionOptions {
  /** Peak-to-peak limit, µV (default 500). */
  maxPeakToPeakUv: number;
  /** Flat when the epoch's SD is below this, µV (default 0.5). */
  flatSdUv: number;
  /** Flat when identical consecutive samples last at least this long, s (default 1). */
  flatRunS: number;
  /** Modified-z limit for the spectral outliers (default 3.5). */
  outlierZ: number;
  /** Broadband power range, Hz (default [0.5, 45]). */
  broadbandHz: [number, number];
  /** High-frequency (muscle) power range, Hz (default [25, 45]). */
  muscleHz: [number, number];
}

export const DEFAULT_REJECTION: Readonly<RejectionOptions> = {
  maxPeakToPeakUv: 500,
  flatSdUv: 0.5,
  flatRunS: 1,
  outlierZ: 3.5,
  broadbandHz: [0.5, 45],
  muscleHz: [25, 45],
};

export interface TimeDomainResult {
  reason: 'amplitude' | 'flat' | null;
  /** The value that broke the rule: peak-to-peak µV, SD µV or run length s; null if none. */
  value: number | null;
  peakToPeakUv: number;
  sdUv: number;
  longestRunS: number;
}

/** Peak-to-peak, SD and longest constant run of x[start … start+length), and the verdict. */
export function timeDomainCheck(
  x: ArrayLike<number>,
  start: number,
  length: number,
  fsHz: number,
  options: Pick<RejectionOptions, 'maxPeakToPeakUv' | 'flatSdUv' | 'flatRunS'> = DEFAULT_REJECTION,
): TimeDomainResult {
  let min = Infinity;
  let max = -Infinity;
  let run = 1;
  let longest = length > 0 ? 1 : 0;
  let prev = NaN;
  // one pass on data shifted by the first sample K (shifted-data variance, Chan, Golub & LeVeque
  // 1983): SD² = (Σ(x−K)² − (Σ(x−K))²/n) / (n − 1); stable while the mean is near K, as in EEG
  const K = length > 0 ? x[start] : 0;
  let s1 = 0;
  let s2 = 0;
  for (let i = start; i < start + length; i++) {
    const v = x[i];
    if (v < min) min = v;
    if (v > max) max = v;
    const d = v - K;
    s1 += d;
    s2 += d * d;
    if (v === prev) {
      run++;
      if (run > longest) longest = run;
    } else run = 1;
    prev = v;
  }
  const sdUv = Math.sqrt(Math.max(0, s2 - (s1 * s1) / length) / Math.max(1, length - 1));
  const peakToPeakUv = max - min;
  const longestRunS = longest / fsHz;
  let reason: TimeDomainResult['reason'] = null;
  let value: number | null = null;
  if (peakToPeakUv > options.maxPeakToPeakUv) [reason, value] = ['amplitude', peakToPeakUv];
  else if (sdUv < options.flatSdUv) [reason, value] = ['flat', sdUv];
  else if (longestRunS >= options.flatRunS) [reason, value] = ['flat', longestRunS];
  return { reason, value, peakToPeakUv, sdUv, longestRunS };
}

/** Median of values[idx[0..n)] using scratch (length ≥ n); NaN for n = 0. */
function medianOf(values: ArrayLike<number>, idx: ArrayLike<number>, n: number, scratch: Float64Array): number {
  for (let i = 0; i < n; i++) scratch[i] = values[idx[i]];
  return medianInPlace(scratch.subarray(0, n));
}

/**
 * Modified z-scores within one group: z_i = |x_i − median| / (1.4826 · MAD)
 * (Iglewicz & Hoaglin 1993). Returns z for each index in idx (0 when MAD = 0 and x_i = median,
 * Infinity when MAD = 0 and x_i differs).
 */
export function modifiedZ(values: ArrayLike<number>, idx: ArrayLike<number>): Float64Array {
  const n = idx.length;
  const scratch = new Float64Array(n);
  const med = medianOf(values, idx, n, scratch);
  const dev = new Float64Array(values.length);
  for (let i = 0; i < n; i++) dev[idx[i]] = Math.abs(values[idx[i]] - med);
  const mad = medianOf(dev, idx, n, scratch);
  const z = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const d = dev[idx[i]];
    z[i] = d === 0 ? 0 : mad === 0 ? Infinity : d / (MAD_TO_SD * mad);
  }
  return z;
}

export interface SpectralRejection {
  epoch: number;
  reason: 'broadband-outlier' | 'muscle-outlier';
  /** The modified z |x − median|/(1.4826·MAD) of the rejected epoch. */
  value: number;
}

/** Per group index: the sampling sd σ_s of log10 broadband and muscle-range power (log-power-spread.ts); NaN = none. */
export interface OutlierFloors {
  broadband: ArrayLike<number>;
  muscle: ArrayLike<number>;
}

/** Fewest epochs in a group for the outlier rule: a median and MAD of fewer say nothing. */
export const MIN_OUTLIER_GROUP = 5;

/**
 * Modified z of values[idx[i]] for the members breaking the rule |x − median| > max(c·1.4826·MAD,
 * floor), NaN for the others (floor in the unit of x; 0 for none).
 */
function outliersOf(values: ArrayLike<number>, idx: ArrayLike<number>, c: number, floor: number): Float64Array {
  const n = idx.length;
  const scratch = new Float64Array(n);
  const med = medianOf(values, idx, n, scratch);
  const dev = new Float64Array(n);
  for (let i = 0; i < n; i++) scratch[i] = dev[i] = Math.abs(values[idx[i]] - med);
  const sd = MAD_TO_SD * medianInPlace(scratch);
  const limit = Math.max(c * sd, floor);
  const z = new Float64Array(n).fill(NaN);
  for (let i = 0; i < n; i++) if (dev[i] > limit) z[i] = sd === 0 ? Infinity : dev[i] / sd;
  return z;
}

/**
 * Spectral outliers of one channel: logBroadband[e], logMuscle[e] (log10 powers per epoch),
 * group[e] (stage index, < 0 = not considered), eligible[e] (1 when the epoch passed the time
 * domain check). Outliers are judged within each group by the rule in the header, with c_n for
 * the group's n and floors[g] the sampling sd σ_s of group g (null: no floor); groups of fewer
 * than minGroup epochs are left alone.
 */
export function spectralOutliers(
  logBroadband: ArrayLike<number>,
  logMuscle: ArrayLike<number>,
  group: ArrayLike<number>,
  eligible: ArrayLike<number>,
  outlierZ: number = DEFAULT_REJECTION.outlierZ,
  floors: OutlierFloors | null = null,
  minGroup = MIN_OUTLIER_GROUP,
): SpectralRejection[] {
  if (!(minGroup >= MIN_OUTLIER_GROUP)) throw new Error(`invalid minimum group size: ${minGroup} (at least ${MIN_OUTLIER_GROUP})`);
  const members = new Map<number, number[]>();
  for (let e = 0; e < group.length; e++) {
    if (group[e] < 0 || !eligible[e] || !Number.isFinite(logBroadband[e]) || !Number.isFinite(logMuscle[e])) continue;
    let list = members.get(group[e]);
    if (!list) members.set(group[e], (list = []));
    list.push(e);
  }
  const floorOf = (sd: ArrayLike<number> | undefined, g: number) => (sd && sd[g] > 0 ? outlierZ * sd[g] : 0);
  const out: SpectralRejection[] = [];
  for (const [g, idx] of members) {
    if (idx.length < minGroup) continue;
    const c = outlierCriticalZ(idx.length, outlierZ);
    const zm = outliersOf(logMuscle, idx, c, floorOf(floors?.muscle, g));
    const zb = outliersOf(logBroadband, idx, c, floorOf(floors?.broadband, g));
    for (let i = 0; i < idx.length; i++) {
      if (!Number.isNaN(zm[i])) out.push({ epoch: idx[i], reason: 'muscle-outlier', value: zm[i] });
      else if (!Number.isNaN(zb[i])) out.push({ epoch: idx[i], reason: 'broadband-outlier', value: zb[i] });
    }
  }
  return out.sort((a, b) => a.epoch - b.epoch);
}
