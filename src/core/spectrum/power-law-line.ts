import type { AperiodicParams } from './aperiodic-model.ts';

/**
 * Straight-line fit in log-log coordinates, log10 P = b − χ·log10 f, by ordinary least squares
 * (closed form; common practice): the plain power law P ∝ f^−χ with knee 0. Frequencies in Hz,
 * log10Power in log10(µV²/Hz).
 */
export function fitPowerLawLine(freqsHz: ArrayLike<number>, log10Power: ArrayLike<number>): AperiodicParams {
  const n = freqsHz.length;
  let sx = 0;
  let sy = 0;
  for (let i = 0; i < n; i++) {
    sx += Math.log10(freqsHz[i]);
    sy += log10Power[i];
  }
  const mx = sx / n;
  const my = sy / n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const dx = Math.log10(freqsHz[i]) - mx;
    sxx += dx * dx;
    sxy += dx * (log10Power[i] - my);
  }
  const slope = sxy / sxx;
  return { offset: my - slope * mx, exponent: -slope, knee: 0 };
}
