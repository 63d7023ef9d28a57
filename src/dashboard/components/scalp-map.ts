// Scalp maps: electrode positions projected onto the disk (src/core/montage/positions.ts) and a
// value between electrodes by inverse-distance weighting, drawn with Observable Plot. A scalp
// pair (Pz-Oz) is drawn at its midpoint, with a line between its two electrodes.
import * as Plot from '@observablehq/plot';
import { channelPosition, pairPositions, projectToDisk, type Position3 } from '../../core/montage/positions.ts';

export interface MapElectrode {
  channel: string;
  /** disk coordinates: vertex (0, 0), equator on the unit circle, nose +y, right ear +x */
  x: number;
  y: number;
  value: number;
  /** a scalp pair's two electrodes on the disk (Pz and Oz for Pz-Oz) */
  pair?: { x1: number; y1: number; x2: number; y2: number };
}

/** Largest disk radius drawn; electrodes below it (mastoids, ear lobes) are left off the map. */
export const MAP_RADIUS = 1.05;

/** Disk positions of the channels that have one: stored x, y, z when given, else from the name (10-10 table; a scalp pair at its midpoint). */
export function mapElectrodes(values: readonly { channel: string; value: number; position?: Position3 | null }[]): MapElectrode[] {
  const out: MapElectrode[] = [];
  for (const v of values) {
    const p = v.position ?? channelPosition(v.channel);
    if (!p || !Number.isFinite(v.value)) continue;
    const d = projectToDisk(p);
    if (Math.hypot(d.x, d.y) > MAP_RADIUS) continue;
    const ends = pairPositions(v.channel);
    if (!ends) {
      out.push({ channel: v.channel, x: d.x, y: d.y, value: v.value });
      continue;
    }
    const [a, b] = ends.map(projectToDisk);
    out.push({ channel: v.channel, x: d.x, y: d.y, value: v.value, pair: { x1: a.x, y1: a.y, x2: b.x, y2: b.y } });
  }
  return out;
}

/**
 * Inverse-distance weighted value at (x, y): Σ wᵢ vᵢ / Σ wᵢ with wᵢ = 1 / dᵢ² (Shepard 1968),
 * equal to vᵢ at an electrode; NaN outside the unit disk (nothing is extrapolated past the head).
 */
export function inverseDistance(electrodes: readonly MapElectrode[], x: number, y: number): number {
  if (x * x + y * y > 1 + 1e-9 || electrodes.length === 0) return Number.NaN;
  let num = 0;
  let den = 0;
  for (const e of electrodes) {
    const d2 = (x - e.x) ** 2 + (y - e.y) ** 2;
    if (d2 < 1e-12) return e.value;
    const w = 1 / d2;
    num += w * e.value;
    den += w;
  }
  return num / den;
}

/** Head outline for Plot lines: the unit circle, a nose at the top and an ear on each side. */
export function headOutline(): { part: string; x: number; y: number }[] {
  const pts: { part: string; x: number; y: number }[] = [];
  for (let i = 0; i <= 120; i++) {
    const a = (2 * Math.PI * i) / 120;
    pts.push({ part: 'head', x: Math.cos(a), y: Math.sin(a) });
  }
  pts.push({ part: 'nose', x: -0.12, y: 0.993 }, { part: 'nose', x: 0, y: 1.13 }, { part: 'nose', x: 0.12, y: 0.993 });
  for (const side of [-1, 1]) {
    for (let i = 0; i <= 20; i++) {
      const a = -Math.PI / 2 + (Math.PI * i) / 20;
      pts.push({ part: `ear${side}`, x: side * (1 + 0.07 * Math.cos(a)), y: 0.18 * Math.sin(a) });
    }
  }
  return pts;
}

export interface ScalpMapOptions {
  /** colour scale: 'sequential' (viridis) or 'diverging' (RdBu, centred on 0, red above) */
  scale: 'sequential' | 'diverging';
  /** shared colour domain (several maps side by side); default: this map's range */
  domain?: [number, number];
  label: string;
  /** electrodes drawn with a ring (e.g. a cluster's channels) */
  marked?: readonly string[];
  size?: number;
}

/** A scalp map as Plot options: interpolated disk, head outline, electrode discs with names, legend. */
export function scalpMapPlot(electrodes: readonly MapElectrode[], o: ScalpMapOptions): Plot.PlotOptions {
  const size = o.size ?? 260;
  const values = electrodes.map((e) => e.value);
  const lo = Math.min(...values);
  const hi = Math.max(...values);
  const m = Math.max(Math.abs(lo), Math.abs(hi)) || 1;
  const domain = o.domain ?? (o.scale === 'diverging' ? [-m, m] : [lo, hi === lo ? lo + 1 : hi]);
  const marked = new Set(o.marked ?? []);
  const outline = headOutline();
  return {
    width: size,
    height: size + 10,
    margin: 12,
    x: { domain: [-1.2, 1.2], axis: null },
    y: { domain: [-1.2, 1.2], axis: null },
    color:
      o.scale === 'diverging'
        ? { type: 'linear', scheme: 'rdbu', reverse: true, domain, legend: 'ramp', label: o.label }
        : { type: 'linear', scheme: 'viridis', domain, legend: 'ramp', label: o.label },
    marks: [
      Plot.raster({ x1: -1, x2: 1, y1: -1, y2: 1, fill: (x: number, y: number) => inverseDistance(electrodes, x, y), pixelSize: 3, interpolate: null }),
      Plot.line(outline, { x: 'x', y: 'y', z: 'part', stroke: '#1d232b', strokeWidth: 1.5 }),
      Plot.link(
        electrodes.filter((e) => e.pair),
        {
          x1: (e: MapElectrode) => e.pair!.x1,
          y1: (e: MapElectrode) => e.pair!.y1,
          x2: (e: MapElectrode) => e.pair!.x2,
          y2: (e: MapElectrode) => e.pair!.y2,
          stroke: '#1d232b',
          strokeWidth: 1,
          strokeDasharray: '3,2',
        },
      ),
      Plot.dot(electrodes, {
        x: 'x',
        y: 'y',
        r: 4.5,
        fill: 'value',
        stroke: (e: MapElectrode) => (marked.has(e.channel) ? 'white' : '#1d232b'),
        strokeWidth: (e: MapElectrode) => (marked.has(e.channel) ? 2.5 : 0.8),
      }),
      Plot.text(electrodes, { x: 'x', y: 'y', text: 'channel', dy: -10, fontSize: 10, fill: '#1d232b', stroke: 'white', strokeWidth: 3, paintOrder: 'stroke' }),
    ],
  };
}
