/**
 * What a paper figure is asked for: which figure, its printed size in millimetres, the resolution
 * of a PNG in dots per inch, and (scalp maps) the frequency band. Checked once here for the
 * dashboard's export and the command line alike; a bad value throws naming it.
 */

export const FIGURE_KINDS = ['statistic-map', 'scalp-map'] as const;
export type FigureKind = (typeof FIGURE_KINDS)[number];
export const FIGURE_FORMATS = ['svg', 'png'] as const;
export type FigureFormat = (typeof FIGURE_FORMATS)[number];

export interface FigureOptions {
  kind: FigureKind;
  widthMm: number;
  heightMm: number;
  /** dots per inch of a PNG (an SVG is vector; its size is in mm) */
  dpi: number;
  format: FigureFormat;
  /** scalp map: the band averaged, Hz; null: the frequency range of the cluster with the smallest p (all frequencies when no cluster formed) */
  bandHz: [number, number] | null;
}

/** Defaults: a two-column journal figure is about 180 mm wide, and 300 dpi is the usual print requirement for PNG (common practice). */
export const FIGURE_DEFAULTS: FigureOptions = { kind: 'statistic-map', widthMm: 180, heightMm: 120, dpi: 300, format: 'svg', bandHz: null };

/** Limits of the printed size (mm) and the resolution (dpi). */
export const FIGURE_LIMITS = { minMm: 30, maxMm: 600, minDpi: 72, maxDpi: 2400 } as const;

export class FigureOptionError extends Error {
  override name = 'FigureOptionError';
}

function inRange(name: string, v: number, lo: number, hi: number, unit: string): number {
  if (!Number.isFinite(v) || v < lo || v > hi) throw new FigureOptionError(`${name} must be a number from ${lo} to ${hi} ${unit}, got ${v}`);
  return v;
}

/** Parses "12-15" or "12–15" (Hz) into [lo, hi]. */
export function parseBandHz(text: string): [number, number] {
  const m = /^\s*(\d+(?:\.\d+)?)\s*[-–]\s*(\d+(?:\.\d+)?)\s*$/.exec(text);
  if (!m || !(Number(m[1]) < Number(m[2]))) throw new FigureOptionError(`band must be written low-high in Hz with low < high (e.g. 12-15), got "${text}"`);
  return [Number(m[1]), Number(m[2])];
}

/** The options with defaults filled and every value checked. */
export function figureOptions(given: Partial<FigureOptions>): FigureOptions {
  const o = { ...FIGURE_DEFAULTS, ...Object.fromEntries(Object.entries(given).filter(([, v]) => v !== undefined)) } as FigureOptions;
  if (!FIGURE_KINDS.includes(o.kind)) throw new FigureOptionError(`figure kind must be one of ${FIGURE_KINDS.join(', ')}, got "${o.kind}"`);
  if (!FIGURE_FORMATS.includes(o.format)) throw new FigureOptionError(`figure format must be one of ${FIGURE_FORMATS.join(', ')}, got "${o.format}"`);
  inRange('width', o.widthMm, FIGURE_LIMITS.minMm, FIGURE_LIMITS.maxMm, 'mm');
  inRange('height', o.heightMm, FIGURE_LIMITS.minMm, FIGURE_LIMITS.maxMm, 'mm');
  inRange('dpi', o.dpi, FIGURE_LIMITS.minDpi, FIGURE_LIMITS.maxDpi, 'dpi');
  if (o.bandHz !== null && !(Array.isArray(o.bandHz) && o.bandHz.length === 2 && o.bandHz[0] < o.bandHz[1]))
    throw new FigureOptionError(`band must be [low, high] Hz with low < high, got ${JSON.stringify(o.bandHz)}`);
  return o;
}

/** Pixels of a PNG of the printed size at `dpi`: round(mm / 25.4 × dpi) each way (1 inch = 25.4 mm). */
export function pixelSize(o: Pick<FigureOptions, 'widthMm' | 'heightMm' | 'dpi'>): { width: number; height: number } {
  return { width: Math.round((o.widthMm / 25.4) * o.dpi), height: Math.round((o.heightMm / 25.4) * o.dpi) };
}
