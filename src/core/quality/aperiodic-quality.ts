import { clampSeverity, type Cell, type QualityRow } from './row.ts';

export interface AperiodicQualityOptions {
  /** Flag a fit with R² below this (default 0.9; common practice, no published standard). */
  minR2: number;
  /** Plausible exponent range (default 0–4; common practice for EEG power spectra, no published standard). */
  exponentRange: readonly [number, number];
}

export const DEFAULT_APERIODIC_QUALITY: Readonly<AperiodicQualityOptions> = { minR2: 0.9, exponentRange: [0, 4] };

/**
 * Aperiodic fit quality, two rows:
 *  - aperiodic-r2: value = R²; flagged below minR2 or when the fit failed (null);
 *    severity = (1 − R²) / (1 − minR2).
 *  - aperiodic-exponent: value = exponent; flagged outside exponentRange;
 *    severity = |χ − centre| / half-range (1 at either end of the range).
 */
export function aperiodicQuality(
  cell: Cell,
  fit: { r2: number | null; exponent: number | null },
  options: AperiodicQualityOptions = DEFAULT_APERIODIC_QUALITY,
): [QualityRow, QualityRow] {
  const failed = 'aperiodic fit failed';
  const r2 = fit.r2;
  const r2Row: QualityRow =
    r2 === null || !Number.isFinite(r2)
      ? { ...cell, metric: 'aperiodic-r2', value: null, flagged: true, reason: failed, severity: clampSeverity(Infinity) }
      : {
          ...cell,
          metric: 'aperiodic-r2',
          value: r2,
          flagged: r2 < options.minR2,
          reason: r2 < options.minR2 ? `aperiodic fit R² ${r2.toFixed(3)} below ${options.minR2}` : null,
          severity: clampSeverity((1 - r2) / (1 - options.minR2)),
        };
  const [lo, hi] = options.exponentRange;
  const x = fit.exponent;
  const exponentRow: QualityRow =
    x === null || !Number.isFinite(x)
      ? { ...cell, metric: 'aperiodic-exponent', value: null, flagged: true, reason: failed, severity: clampSeverity(Infinity) }
      : {
          ...cell,
          metric: 'aperiodic-exponent',
          value: x,
          flagged: x < lo || x > hi,
          reason: x < lo || x > hi ? `aperiodic exponent ${x.toFixed(2)} outside the plausible range ${lo}–${hi}` : null,
          severity: clampSeverity(Math.abs(x - (lo + hi) / 2) / ((hi - lo) / 2)),
        };
  return [r2Row, exponentRow];
}
