/**
 * The diverging colour scale of the figures: negative values blue, zero near white, positive red.
 * The 11 anchors are the ColorBrewer "RdBu" 11-class scheme (Brewer, colorbrewer2.org; values from
 * memory), from the blue end to the red end; between anchors the sRGB components are interpolated
 * linearly.
 */
const RD_BU_BLUE_TO_RED = ['#053061', '#2166ac', '#4393c3', '#92c5de', '#d1e5f0', '#f7f7f7', '#fddbc7', '#f4a582', '#d6604d', '#b2182b', '#67001f'];

/** Colour of points without a value (left out, not computed). */
export const MISSING_COLOUR = '#bdbdbd';

const rgb = (hex: string) => [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16));
const hex2 = (v: number) => Math.round(v).toString(16).padStart(2, '0');
const ANCHORS = RD_BU_BLUE_TO_RED.map(rgb);

/** Colour of `value` on the symmetric scale [−limit, limit] (clamped at both ends); MISSING_COLOUR when not a finite number. */
export function divergingColour(value: number | null, limit: number): string {
  if (!(limit > 0)) throw new Error(`colour scale limit must be positive, got ${limit}`);
  if (value === null || !Number.isFinite(value)) return MISSING_COLOUR;
  const u = (Math.max(-limit, Math.min(limit, value)) / limit + 1) / 2; // 0 … 1
  const pos = u * (ANCHORS.length - 1);
  const i = Math.min(ANCHORS.length - 2, Math.floor(pos));
  const w = pos - i;
  const [a, b] = [ANCHORS[i], ANCHORS[i + 1]];
  return `#${[0, 1, 2].map((k) => hex2(a[k] + w * (b[k] - a[k]))).join('')}`;
}
