/**
 * Distance of each recording's spectrum from the cohort's robust median spectrum, for one
 * channel and stage, as a robust z (run after the whole cohort is in).
 *
 *   m_k  = median over recordings i of log10 P_ik             (bin-wise cohort median spectrum)
 *   d_i  = sqrt( mean over bins k in [fminHz, fmaxHz] of (log10 P_ik − m_k)² )   (log10 units)
 *   z_i  = (d_i − median(d)) / (1.4826 · MAD(d))
 *
 * 1.4826 · MAD is a consistent estimate of the SD for normal data; z > 3.5 is the outlier rule
 * for the modified z-score of Iglewicz & Hoaglin (1993, "How to Detect and Handle Outliers").
 * The z is signed: only spectra farther from the median than usual are flagged.
 */
import { median } from '../spectrum/welch.ts';
import { clampSeverity, QualityInputError, type QualityRow } from './row.ts';
import type { Stage } from '../stages.ts';

export interface CohortDistanceOptions {
  /** Frequency range of the distance, Hz (default 1–40). */
  fminHz: number;
  fmaxHz: number;
  /** Flag above this robust z (default 3.5; Iglewicz & Hoaglin 1993). */
  zThreshold: number;
  /** Fewest recordings for a median/MAD (default 5; our choice). */
  minRecordings: number;
}

export const DEFAULT_COHORT_DISTANCE: Readonly<CohortDistanceOptions> = { fminHz: 1, fmaxHz: 40, zThreshold: 3.5, minRecordings: 5 };

export interface CohortSpectrum {
  recordingId: string;
  /** PSD in µV²/Hz on freqsHz. */
  power: ArrayLike<number>;
}

export interface CohortDistanceRow extends QualityRow {
  recordingId: string;
  /** d_i in log10 units. */
  distanceLog10: number;
}

/** Rows for one channel × stage: value = z_i, flagged when z_i > zThreshold; severity = max(0, z) / zThreshold. */
export function cohortDistance(
  channel: string,
  stage: Stage,
  freqsHz: ArrayLike<number>,
  spectra: readonly CohortSpectrum[],
  options: CohortDistanceOptions = DEFAULT_COHORT_DISTANCE,
): CohortDistanceRow[] {
  const bins: number[] = [];
  for (let k = 0; k < freqsHz.length; k++) if (freqsHz[k] >= options.fminHz && freqsHz[k] <= options.fmaxHz) bins.push(k);
  if (bins.length === 0) throw new QualityInputError(`no bins in ${options.fminHz}–${options.fmaxHz} Hz`);
  const n = spectra.length;
  const logs = spectra.map((s) => {
    if (s.power.length !== freqsHz.length) throw new QualityInputError(`recording ${s.recordingId}: ${s.power.length} bins, expected ${freqsHz.length}`);
    return Float64Array.from(bins, (k) => {
      if (!(s.power[k] > 0)) throw new QualityInputError(`recording ${s.recordingId}: power ${s.power[k]} at ${freqsHz[k]} Hz is not positive`);
      return Math.log10(s.power[k]);
    });
  });
  const distance = new Float64Array(n);
  const column = new Float64Array(n);
  for (let b = 0; b < bins.length; b++) {
    for (let i = 0; i < n; i++) column[i] = logs[i][b];
    const m = median(column);
    // accumulate (log10 P_ik − m_k)²
    for (let i = 0; i < n; i++) distance[i] += (logs[i][b] - m) * (logs[i][b] - m);
  }
  for (let i = 0; i < n; i++) distance[i] = Math.sqrt(distance[i] / bins.length);
  const base = { channel, stage, metric: 'cohort-distance' as const };
  if (n < options.minRecordings) {
    return spectra.map((s, i) => ({
      ...base,
      recordingId: s.recordingId,
      distanceLog10: distance[i],
      value: null,
      flagged: false,
      reason: `not assessable: ${n} recordings, fewer than ${options.minRecordings}`,
      severity: 0,
    }));
  }
  const med = median(distance);
  const mad = median(Array.from(distance, (d) => Math.abs(d - med)));
  return spectra.map((s, i) => {
    const d = distance[i];
    if (mad === 0) {
      const differs = d !== med;
      return {
        ...base,
        recordingId: s.recordingId,
        distanceLog10: d,
        value: null,
        flagged: differs,
        reason: differs ? 'spectrum differs from a cohort whose distances do not vary (MAD 0)' : null,
        severity: differs ? clampSeverity(Infinity) : 0,
      };
    }
    const z = (d - med) / (1.4826 * mad);
    const flagged = z > options.zThreshold;
    const reason = flagged
      ? `spectrum far from the cohort median for ${channel} ${stage}: robust z ${z.toFixed(1)} (threshold ${options.zThreshold}), RMS distance ${d.toFixed(3)} log10 units`
      : null;
    return { ...base, recordingId: s.recordingId, distanceLog10: d, value: z, flagged, reason, severity: clampSeverity(Math.max(0, z) / options.zThreshold) };
  });
}
