/**
 * A spectrum stored compactly: log10 power quantised to 16 bits over the row's own range (pure).
 *
 *   lo = min_b log10 P_b, step = (max_b log10 P_b − lo)/65535 (both rounded to 32-bit floats first),
 *   level_b = round((log10 P_b − lo)/step),   stored value = lo + level_b·step.
 *
 * So |stored − log10 P_b| ≤ step/2 = (max − min)/131070 in log10 units: 3.1e−5 for a row spanning
 * four decades, 0.007 % in power — far below the sampling spread of one epoch's estimate (common
 * practice: uniform quantisation, error at most half a step). Power at or below FLOOR_UV2_PER_HZ
 * (a flat channel's zero) is stored as the floor.
 */

/** Lowest stored power, µV²/Hz (log10 = −12). */
export const FLOOR_UV2_PER_HZ = 1e-12;
const LEVELS = 65535;

/**
 * Quantises power[offset … offset+n) (µV²/Hz) into levels[at … at+n); returns the row's lo and
 * step (log10 units, exact 32-bit floats).
 */
export function quantiseLog10(power: ArrayLike<number>, offset: number, n: number, levels: Uint16Array, at: number): { lo: number; step: number } {
  let lo = Infinity;
  let hi = -Infinity;
  for (let b = 0; b < n; b++) {
    const v = Math.log10(Math.max(power[offset + b], FLOOR_UV2_PER_HZ));
    if (!Number.isFinite(v)) throw new Error(`spectrum bin ${b} holds a value that is not a finite number: ${power[offset + b]} µV²/Hz`);
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (n === 0) throw new Error('an empty spectrum row cannot be quantised');
  // lo rounded down and step up to 32-bit floats, so every level lies in 0 … 65535
  let lo32 = Math.fround(lo);
  if (lo32 > lo) lo32 = Math.fround(lo - Math.abs(lo) * 2 ** -23 - 1e-30);
  let step = Math.fround((hi - lo32) / LEVELS);
  while (lo32 + step * LEVELS < hi) step = Math.fround(step * (1 + 2 ** -22));
  for (let b = 0; b < n; b++) {
    const v = Math.log10(Math.max(power[offset + b], FLOOR_UV2_PER_HZ));
    // uniform quantisation: level = round((v − lo)/step)
    levels[at + b] = step > 0 ? Math.min(LEVELS, Math.round((v - lo32) / step)) : 0;
  }
  return { lo: lo32, step };
}

/** The stored log10 power of bin b: lo + level·step. */
export function dequantiseLog10(lo: number, step: number, level: number): number {
  return lo + level * step;
}
