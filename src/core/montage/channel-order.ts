/**
 * The one order of channels in maps, channel lists, channel × frequency images and tables: front
 * to back, then left to right (y descending, then x ascending, in head coordinates: x to the right
 * ear, y to the nasion — positions.ts), by the stored position where there is one, else the 10-10
 * template position of the name; channels with neither come last, by name with numbers by value
 * (E2 before E10, as high-density nets are numbered). y is compared to
 * Y_GRID, so mirror pairs (F3, F4) whose y differ only by rounding read left to right.
 */
import { channelPosition, type Position3 } from './positions.ts';

/** y is compared on this grid (unit sphere; a digitised cap in mm is compared to the µm) — ours. */
export const Y_GRID = 1e-3;

const byName = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

/** Names compared piece by piece, runs of digits by their value: E2 < E10 < F1. */
function byNameAndNumber(a: string, b: string): number {
  const pa = a.match(/\d+|\D+/g) ?? [];
  const pb = b.match(/\d+|\D+/g) ?? [];
  for (let i = 0; i < Math.min(pa.length, pb.length); i++) {
    const numeric = /^\d/.test(pa[i]) && /^\d/.test(pb[i]);
    const d = numeric ? Number(pa[i]) - Number(pb[i]) : byName(pa[i], pb[i]);
    if (d !== 0) return d;
  }
  return pa.length - pb.length || byName(a, b);
}

/**
 * The channels front to back, then left to right. `stored` gives a channel's stored position
 * (null or undefined: none stored, the template position of its name is used).
 */
export function frontToBack(channels: readonly string[], stored: (channel: string) => Position3 | null | undefined = () => null): string[] {
  const placed: { channel: string; p: Position3 }[] = [];
  const unplaced: string[] = [];
  for (const channel of channels) {
    const p = stored(channel) ?? channelPosition(channel);
    if (p && Number.isFinite(p.x) && Number.isFinite(p.y)) placed.push({ channel, p });
    else unplaced.push(channel);
  }
  const row = (p: Position3) => Math.round(p.y / Y_GRID);
  placed.sort((a, b) => row(b.p) - row(a.p) || a.p.x - b.p.x || byName(a.channel, b.channel));
  return [...placed.map((e) => e.channel), ...unplaced.sort(byNameAndNumber)];
}

/** The first stored position of each channel in position rows (a contrast's data.positions), for frontToBack. */
export function storedPositionOf(rows: readonly { channel: string; x: number; y: number; z: number }[]): (channel: string) => Position3 | undefined {
  const first = new Map<string, Position3>();
  for (const r of rows) if (!first.has(r.channel)) first.set(r.channel, { x: r.x, y: r.y, z: r.z });
  return (channel) => first.get(channel);
}
