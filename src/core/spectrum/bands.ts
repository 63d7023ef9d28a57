/**
 * Named frequency bands and band power from a one-sided PSD (pure).
 *
 * Band edges are common practice in sleep EEG, not a standard; every edge is editable:
 *   delta (slow oscillation and delta) 0.5–4 Hz, theta 4–8, alpha 8–12, sigma 12–16, beta 16–30,
 *   broadband 0.5–45 Hz; sigma presets slow-sigma 10–12 and fast-sigma 13–15 Hz.
 * A band holds the bins f_k with loHz ≤ f_k ≤ hiHz (both edges inclusive, so trapezoid integrals
 * of adjacent bands add up). Two methods, always stated with the result:
 *   'mean'     — mean density over those bins, µV²/Hz;
 *   'integral' — trapezoid rule over those bins, Σ (P_k + P_{k+1})/2 · Δf, µV²
 *                (as scipy.integrate.trapezoid(P[lo..hi], dx=Δf)).
 * Relative power = band power / power over a stated denominator range (default broadband).
 */
export interface Band {
  name: string;
  loHz: number;
  hiHz: number;
}

export type BandMethod = 'mean' | 'integral';

export const DEFAULT_BANDS: readonly Band[] = [
  { name: 'delta', loHz: 0.5, hiHz: 4 },
  { name: 'theta', loHz: 4, hiHz: 8 },
  { name: 'alpha', loHz: 8, hiHz: 12 },
  { name: 'sigma', loHz: 12, hiHz: 16 },
  { name: 'beta', loHz: 16, hiHz: 30 },
  { name: 'broadband', loHz: 0.5, hiHz: 45 },
];

/** Sigma sub-band presets (common practice): slow 10–12 Hz and fast 13–15 Hz spindles. */
export const SIGMA_PRESETS: readonly Band[] = [
  { name: 'slow-sigma', loHz: 10, hiHz: 12 },
  { name: 'fast-sigma', loHz: 13, hiHz: 15 },
];

export class BandError extends Error {
  override name = 'BandError';
}

/** Checks a band definition; throws naming the bad value. */
export function checkBand(band: Band): Band {
  if (!band.name) throw new BandError('band without a name');
  if (!(Number.isFinite(band.loHz) && Number.isFinite(band.hiHz) && band.loHz >= 0 && band.hiHz > band.loHz)) {
    throw new BandError(`band '${band.name}': invalid edges ${band.loHz}–${band.hiHz} Hz`);
  }
  return band;
}

/** Every named band parseBand knows (DEFAULT_BANDS, then SIGMA_PRESETS). */
export const NAMED_BANDS: readonly Band[] = [...DEFAULT_BANDS, ...SIGMA_PRESETS];

/** The band grammar in words, for help texts and error messages. */
export const BAND_SYNTAX = `LO-HI in Hz (e.g. 12-16), name:LO-HI, or a preset: ${NAMED_BANDS.map((b) => b.name).join(', ')}`;

/**
 * The one band grammar of every command, the contrast JSON and the band check's address bar:
 * "LO-HI" in Hz (e.g. "12-16", named "12–16 Hz"), "name:LO-HI" (e.g. "spindles:12.5-15"; the name
 * is any text without a colon), or the name of a preset (NAMED_BANDS, e.g. "sigma").
 */
export function parseBand(text: string): Band {
  const preset = NAMED_BANDS.find((b) => b.name === text.trim());
  if (preset) return { ...preset };
  const m = /^\s*(?:([^:]+?)\s*:)?\s*([\d.]+)\s*-\s*([\d.]+)\s*$/.exec(text);
  if (!m) throw new BandError(`invalid band '${text}': expected ${BAND_SYNTAX}`);
  const lo = Number(m[2]);
  const hi = Number(m[3]);
  return checkBand({ name: m[1] === undefined ? `${lo}–${hi} Hz` : m[1].trim(), loHz: lo, hiHz: hi });
}

/** First and last bin index (inclusive) with loHz ≤ f ≤ hiHz, or null when no bin falls inside. */
export function bandBins(band: Band, freqStartHz: number, freqStepHz: number, nBins: number): { first: number; last: number } | null {
  const eps = 1e-9;
  const first = Math.max(0, Math.ceil((band.loHz - freqStartHz) / freqStepHz - eps));
  const last = Math.min(nBins - 1, Math.floor((band.hiHz - freqStartHz) / freqStepHz + eps));
  return last >= first ? { first, last } : null;
}

/** Mean density over bins first..last: (1/n) Σ P_k, µV²/Hz. */
export function meanDensity(psd: ArrayLike<number>, first: number, last: number): number {
  let s = 0;
  for (let k = first; k <= last; k++) s += psd[k];
  return s / (last - first + 1);
}

/** Trapezoid integral over bins first..last: Σ_{k=first}^{last−1} (P_k + P_{k+1})/2 · Δf, µV². */
export function trapezoid(psd: ArrayLike<number>, first: number, last: number, freqStepHz: number): number {
  let s = 0;
  for (let k = first; k < last; k++) s += 0.5 * (psd[k] + psd[k + 1]);
  return s * freqStepHz;
}

/** Band power of one spectrum; NaN when no bin lies inside the band. */
export function bandPower(psd: ArrayLike<number>, band: Band, freqStartHz: number, freqStepHz: number, method: BandMethod = 'mean'): number {
  const bins = bandBins(band, freqStartHz, freqStepHz, psd.length);
  if (!bins) return NaN;
  return method === 'mean' ? meanDensity(psd, bins.first, bins.last) : trapezoid(psd, bins.first, bins.last, freqStepHz);
}

/** Relative power: band power / power over the denominator range, same method for both. */
export function relativePower(
  psd: ArrayLike<number>,
  band: Band,
  denominator: Band,
  freqStartHz: number,
  freqStepHz: number,
  method: BandMethod = 'integral',
): number {
  return bandPower(psd, band, freqStartHz, freqStepHz, method) / bandPower(psd, denominator, freqStartHz, freqStepHz, method);
}

/**
 * Band powers of many spectra on one frequency axis: bin ranges computed once, then
 * `compute(psd, out)` fills out[b] for each band (no allocation per call).
 */
export class BandPowerTable {
  readonly bands: readonly Band[];
  readonly method: BandMethod;
  private readonly first: Int32Array;
  private readonly last: Int32Array;
  private readonly freqStepHz: number;

  constructor(bands: readonly Band[], freqStartHz: number, freqStepHz: number, nBins: number, method: BandMethod = 'mean') {
    this.bands = bands.map(checkBand);
    this.method = method;
    this.freqStepHz = freqStepHz;
    this.first = new Int32Array(bands.length);
    this.last = new Int32Array(bands.length);
    bands.forEach((b, i) => {
      const bins = bandBins(b, freqStartHz, freqStepHz, nBins);
      if (!bins) throw new BandError(`band '${b.name}' (${b.loHz}–${b.hiHz} Hz) has no bin on the axis 0–${(nBins - 1) * freqStepHz} Hz`);
      this.first[i] = bins.first;
      this.last[i] = bins.last;
    });
  }

  compute(psd: ArrayLike<number>, out: Float64Array | Float32Array): void {
    for (let b = 0; b < this.bands.length; b++) {
      out[b] = this.method === 'mean' ? meanDensity(psd, this.first[b], this.last[b]) : trapezoid(psd, this.first[b], this.last[b], this.freqStepHz);
    }
  }
}
