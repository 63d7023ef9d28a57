/**
 * Epoch rejection per channel (pure). Two passes:
 *  1. time domain, epoch by epoch (`timeDomainCheck`): 'amplitude' when the peak-to-peak
 *     amplitude exceeds maxPeakToPeakUv (default 500 µV, common practice for sleep EEG), 'flat'
 *     when the SD is below flatSdUv (default 0.5 µV, common practice) or the longest run of
 *     identical consecutive samples lasts at least flatRunS (default 1 s: live EEG never holds one
 *     value that long; our choice).
 *  2. spectral outliers within the same stage and channel (`spectralOutliers`), over the epochs
 *     that passed step 1: modified z = |x − median| / (1.4826 · MAD) > outlierZ (default 3.5;
 *     Iglewicz & Hoaglin 1993, "How to Detect and Handle Outliers", ASQC) for
 *     x = log10 broadband power (default 0.5–45 Hz) → 'broadband-outlier', and
 *     x = log10 high-frequency power (default 25–45 Hz, the muscle range) → 'muscle-outlier'.
 *     1.4826 = 1/Φ⁻¹(3/4) makes the MAD a consistent SD estimate for normal data.
 * An epoch gets one reason per channel, the first rule it breaks in the order amplitude, flat,
 * muscle-outlier, broadband-outlier (muscle is the more specific finding of the two outliers).
 */
import { medianInPlace } from '../stats/median.ts';

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
    z[i] = d === 0 ? 0 : mad === 0 ? Infinity : d / (1.4826 * mad);
  }
  return z;
}

export interface SpectralRejection {
  epoch: number;
  reason: 'broadband-outlier' | 'muscle-outlier';
  /** The modified z that broke the rule. */
  value: number;
}

/**
 * Spectral outliers of one channel: logBroadband[e], logMuscle[e] (log10 powers per epoch),
 * group[e] (stage index, < 0 = not considered), eligible[e] (1 when the epoch passed the time
 * domain check). Outliers are judged within each group; groups of fewer than minGroup epochs
 * (default 5) are too small for a median/MAD and are left alone.
 */
export function spectralOutliers(
  logBroadband: ArrayLike<number>,
  logMuscle: ArrayLike<number>,
  group: ArrayLike<number>,
  eligible: ArrayLike<number>,
  outlierZ: number = DEFAULT_REJECTION.outlierZ,
  minGroup = 5,
): SpectralRejection[] {
  const members = new Map<number, number[]>();
  for (let e = 0; e < group.length; e++) {
    if (group[e] < 0 || !eligible[e] || !Number.isFinite(logBroadband[e]) || !Number.isFinite(logMuscle[e])) continue;
    let list = members.get(group[e]);
    if (!list) members.set(group[e], (list = []));
    list.push(e);
  }
  const out: SpectralRejection[] = [];
  for (const idx of members.values()) {
    if (idx.length < minGroup) continue;
    const zm = modifiedZ(logMuscle, idx);
    const zb = modifiedZ(logBroadband, idx);
    for (let i = 0; i < idx.length; i++) {
      if (zm[i] > outlierZ) out.push({ epoch: idx[i], reason: 'muscle-outlier', value: zm[i] });
      else if (zb[i] > outlierZ) out.push({ epoch: idx[i], reason: 'broadband-outlier', value: zb[i] });
    }
  }
  return out.sort((a, b) => a.epoch - b.epoch);
}
