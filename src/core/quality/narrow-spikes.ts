/**
 * Narrow spikes: spectral peaks far narrower than physiological rhythms (spindles, alpha and
 * theta peaks are ≥ 1 Hz wide), typically electrical artifacts.
 *
 * A bin k is a candidate when it is a local maximum and exceeds the median of its ±neighbourhoodHz
 * bins by at least heightLog10:   log10(P_k / M_k) ≥ heightLog10.
 * Its width is the full width at half height above that baseline, in linear power:
 * the distance between the nearest crossings of P = M_k + (P_k − M_k)/2 on each side (linear
 * interpolation between bins). A spectral line seen through a Hann window is about 1.5 bins
 * wide at half height whatever its height (0.375 Hz at 4-s segments), while a Gaussian peak of
 * log height h and standard deviation σ is ≥ 1.3σ wide for h ≤ 1.5. The candidate is a narrow
 * spike when its width is at most maxWidthHz. This generalises "the bin exceeds its
 * neighbourhood while both neighbouring bins do not" to lines that leak into the next bins.
 * Needs a frequency resolution finer than maxWidthHz / 2 (segments ≥ 4 s for the default).
 */
import { median } from '../spectrum/welch.ts';
import { clampSeverity, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface NarrowSpikeOptions {
  /** Minimum excess over the neighbourhood median, log10 units (default 0.5, about 3.2×; our choice). */
  heightLog10: number;
  /** Largest width at half height still called narrow, Hz (default 0.75; physiological peaks are wider). */
  maxWidthHz: number;
  /** Half-width of the neighbourhood whose median is the baseline, Hz (default 2). */
  neighbourhoodHz: number;
  /** Search range, Hz (default 2 Hz up to the last bin; bins whose neighbourhood leaves the spectrum are skipped). */
  fminHz: number;
  fmaxHz: number;
  /** Ranges left out of the search, Hz (e.g. the mains line, which has its own metric). */
  excludeHz: readonly (readonly [number, number])[];
}

export const DEFAULT_NARROW_SPIKE: Readonly<NarrowSpikeOptions> = {
  heightLog10: 0.5,
  maxWidthHz: 0.75,
  neighbourhoodHz: 2,
  fminHz: 2,
  fmaxHz: Infinity,
  excludeHz: [],
};

export interface NarrowSpike {
  freqHz: number;
  /** log10(P_k / M_k). */
  excessLog10: number;
  widthHz: number;
}

/** All narrow spikes of one spectrum, strongest first. */
export function findNarrowSpikes(freqsHz: ArrayLike<number>, power: ArrayLike<number>, options: NarrowSpikeOptions = DEFAULT_NARROW_SPIKE): NarrowSpike[] {
  const n = freqsHz.length;
  if (power.length !== n) throw new QualityInputError(`freqsHz has ${n} bins, power ${power.length}`);
  const out: NarrowSpike[] = [];
  if (n < 3) return out;
  const first = freqsHz[0];
  const last = freqsHz[n - 1];
  const window: number[] = [];
  for (let k = 1; k < n - 1; k++) {
    const f = freqsHz[k];
    if (f < options.fminHz || f > options.fmaxHz) continue;
    if (f - options.neighbourhoodHz < first || f + options.neighbourhoodHz > last) continue;
    if (options.excludeHz.some(([lo, hi]) => f >= lo && f <= hi)) continue;
    if (!(power[k] >= power[k - 1] && power[k] > power[k + 1])) continue;
    // Baseline M_k = median of P over |f_j − f_k| ≤ neighbourhoodHz (common practice: robust local baseline).
    window.length = 0;
    let lo = k;
    while (lo > 0 && f - freqsHz[lo - 1] <= options.neighbourhoodHz) lo--;
    let hi = k;
    while (hi < n - 1 && freqsHz[hi + 1] - f <= options.neighbourhoodHz) hi++;
    for (let j = lo; j <= hi; j++) window.push(power[j]);
    const base = median(window);
    if (!(base > 0)) throw new QualityInputError(`non-positive power near ${f} Hz`);
    const excessLog10 = Math.log10(power[k] / base);
    if (excessLog10 < options.heightLog10) continue;
    // Full width at half height above the baseline: half = M_k + (P_k − M_k)/2.
    const half = base + (power[k] - base) / 2;
    const left = crossing(freqsHz, power, k, -1, half, lo);
    const right = crossing(freqsHz, power, k, +1, half, hi);
    if (left === null || right === null) continue;
    const widthHz = right - left;
    if (widthHz <= options.maxWidthHz) out.push({ freqHz: f, excessLog10, widthHz });
  }
  return out.sort((a, b) => b.excessLog10 - a.excessLog10);
}

/** Frequency where P first falls to `level` walking from k in direction dir, or null if not before `stop`. */
function crossing(freqsHz: ArrayLike<number>, power: ArrayLike<number>, k: number, dir: -1 | 1, level: number, stop: number): number | null {
  for (let j = k; j !== stop; j += dir) {
    const a = power[j];
    const b = power[j + dir];
    if (b <= level) return freqsHz[j] + ((a - level) / (a - b)) * (freqsHz[j + dir] - freqsHz[j]);
  }
  return null;
}

/**
 * The narrow-spike row: value = the largest narrow spike's excess log10(P_k/M_k) (0 when
 * there is none), flagged when any is found; severity = value / heightLog10 when flagged, else 0.
 */
export function narrowSpikes(
  cell: Cell,
  freqsHz: ArrayLike<number>,
  power: ArrayLike<number>,
  options: NarrowSpikeOptions = DEFAULT_NARROW_SPIKE,
): QualityRow & { spikes: NarrowSpike[] } {
  const spikes = findNarrowSpikes(freqsHz, power, options);
  const base = { ...cell, metric: 'narrow-spike' as const, spikes };
  if (spikes.length === 0) return { ...base, value: 0, flagged: false, reason: null, severity: 0 };
  const top = spikes[0];
  const where =
    spikes
      .slice(0, 3)
      .map((s) => `${s.freqHz.toFixed(2)} Hz`)
      .join(', ') + (spikes.length > 3 ? ` and ${spikes.length - 3} more` : '');
  const reason =
    `narrow spike${spikes.length > 1 ? 's' : ''} at ${where}: largest ${Math.pow(10, top.excessLog10).toFixed(1)}× ` +
    `its ±${options.neighbourhoodHz} Hz neighbourhood median, ${top.widthHz.toFixed(2)} Hz wide at half height ` +
    `(narrow: ≤ ${options.maxWidthHz} Hz)`;
  return { ...base, value: top.excessLog10, flagged: true, reason, severity: clampSeverity(top.excessLog10 / options.heightLog10) };
}
