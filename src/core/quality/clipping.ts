import { clampSeverity, pct, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface ClippingOptions {
  /** Flag above this fraction of samples at the digital limits (default 0.001 = 0.1 %; our choice). */
  maxFraction: number;
}

export const DEFAULT_CLIPPING: Readonly<ClippingOptions> = { maxFraction: 0.001 };

/**
 * Clipping: fraction of samples equal to the EDF digital minimum or maximum (the amplifier or
 * converter saturated). value = nAtLimits / nSamples; severity = value / maxFraction.
 */
export function clipping(cell: Cell, nSamples: number, nAtLimits: number, options: ClippingOptions = DEFAULT_CLIPPING): QualityRow {
  if (!Number.isInteger(nSamples) || nSamples <= 0) throw new QualityInputError(`invalid nSamples: ${nSamples}`);
  if (!Number.isInteger(nAtLimits) || nAtLimits < 0 || nAtLimits > nSamples) throw new QualityInputError(`invalid nAtLimits: ${nAtLimits} of ${nSamples}`);
  const value = nAtLimits / nSamples;
  const flagged = value > options.maxFraction;
  const reason = flagged ? `clipping: ${pct(value)} of samples at the digital limits (more than ${pct(options.maxFraction)})` : null;
  return { ...cell, metric: 'clipping', value, flagged, reason, severity: clampSeverity(value / options.maxFraction) };
}
