/**
 * The spatial side of a contrast: one position per channel and the neighbour graph its clusters
 * use. Neighbours come from the contrast's neighbour table when it has one ("neighbours"), else
 * from the channels' positions (src/core/montage/adjacency.ts positionNeighbours: Delaunay of the
 * scalp projection without its long rim edges). A channel's position is the one stored for it
 * (channels.x, y, z: from the recording's positions file or the 10-10 template) in the
 * recordings the contrast uses: when they differ (positions digitised per subject), the mean
 * direction; when they differ by more than MAX_SPREAD_DEG, the recordings do not share one
 * layout and the contrast refuses. A bipolar channel made at ingest (no row of its own) sits
 * halfway between its stored electrodes. Otherwise, and without stored positions (data.positions
 * absent: a database written before they were stored), a channel has the 10-10 position of its name.
 */
import { AdjacencyError, channelsMissingFrom, positionNeighbours, tableNeighbours } from '../montage/adjacency.ts';
import { channelPosition, type Position3 } from '../montage/positions.ts';
import type { ContrastData } from './data.ts';
import { ContrastDataError } from './data-error.ts';
import type { Contrast } from './spec.ts';

/** Largest angle between one channel's positions in two recordings of a contrast, degrees (ours: digitised caps on different heads differ by a few degrees, two different caps with one naming by far more). */
export const MAX_SPREAD_DEG = 30;

export interface ChannelLayout {
  /** where the channel neighbours came from: the contrast's table, the positions, or none (one channel, a channel average) */
  neighbours: 'table' | 'positions' | 'none';
  /** per channel of the points (statistics.channels order): its direction on the unit sphere, or null when unknown */
  positions: (Position3 | null)[];
}

const angleDeg = (a: Position3, b: Position3) => (Math.acos(Math.max(-1, Math.min(1, a.x * b.x + a.y * b.y + a.z * b.z))) * 180) / Math.PI;

/** Names in a one-line message: all of a few, else the first ones and the count. */
function nameList(names: readonly string[]): string {
  return names.length <= 8 ? names.join(', ') : `${names.slice(0, 8).join(', ')}, … (${names.length} in all)`;
}

/** Each channel's position over the recordings used ((subject, session) keys), or null. */
function channelPositions(channels: readonly string[], data: ContrastData, used: ReadonlySet<string>): (Position3 | null)[] {
  if (!data.positions) return channels.map((ch) => channelPosition(ch) ?? null);
  const seen = new Map<string, { subject: string; p: Position3 }[]>();
  for (const r of data.positions) {
    // no recording used (no subject kept): any, so the refusal that follows is about the subjects
    if (used.size > 0 && !used.has(`${r.subject}\u0000${r.session ?? ''}`)) continue;
    let list = seen.get(r.channel);
    if (!list) seen.set(r.channel, (list = []));
    list.push({ subject: r.subject, p: { x: r.x, y: r.y, z: r.z } });
  }
  const pooled = (ch: string): Position3 | null => {
    const list = seen.get(ch);
    if (!list || list.length === 0) return null;
    const first = list[0].p;
    // one layout shared by every recording (the template, one cap file): that position, exactly
    if (list.every(({ p }) => p.x === first.x && p.y === first.y && p.z === first.z)) return first;
    let x = 0;
    let y = 0;
    let z = 0;
    for (const { p } of list) {
      x += p.x;
      y += p.y;
      z += p.z;
    }
    const r = Math.hypot(x, y, z);
    const mean = r > 0 ? { x: x / r, y: y / r, z: z / r } : first;
    let worst = list[0];
    for (const item of list) if (angleDeg(item.p, mean) > angleDeg(worst.p, mean)) worst = item;
    const spread = angleDeg(worst.p, mean);
    if (!(r > 0) || spread > MAX_SPREAD_DEG) {
      throw new ContrastDataError(
        `channel ${ch} lies at different places in different recordings (subject ${worst.subject} ${spread.toFixed(0)}° from the mean of ${list.length}): one contrast cannot pool two electrode layouts under one channel name`,
      );
    }
    return mean;
  };
  return channels.map((ch) => pooled(ch) ?? pairPosition(ch, pooled) ?? channelPosition(ch) ?? null);
}

/**
 * A derived channel that is no channels row of its own (a bipolar pair made at ingest, E1-E3):
 * halfway between its two stored electrodes on the sphere, or at the first against a mastoid or
 * ear lobe (as the template places C3-M2 at C3); null when its electrodes are not stored.
 */
function pairPosition(name: string, stored: (ch: string) => Position3 | null): Position3 | null {
  const m = /^\s*([^-\s]+)\s*-\s*([^-\s]+)\s*$/.exec(name);
  const a = m ? stored(m[1]) : null;
  if (!m || !a) return null;
  if (/^(M|A)[12]$/i.test(m[2])) return a;
  const b = stored(m[2]);
  if (!b) return null;
  const x = a.x + b.x;
  const y = a.y + b.y;
  const z = a.z + b.z;
  const r = Math.hypot(x, y, z);
  return r > 1e-9 ? { x: x / r, y: y / r, z: z / r } : null;
}

/**
 * The layout and neighbour graph of a contrast over `channels` (the stored names), for the
 * recordings `used` (keys `subject\0session`); `spatial` false (one channel, a channel average):
 * no graph and nothing required. Throws ContrastDataError naming the channels that have neither a
 * position nor a row in the neighbour table.
 */
export function channelLayout(
  c: Contrast,
  channels: readonly string[],
  data: ContrastData,
  used: ReadonlySet<string>,
  spatial: boolean,
): { layout: ChannelLayout; graph: number[][] | null } {
  const positions = channelPositions(channels, data, used);
  if (!spatial) return { layout: { neighbours: 'none', positions }, graph: null };
  if (c.neighbours) {
    const missing = channelsMissingFrom(c.neighbours, channels);
    if (missing.length > 0)
      throw new ContrastDataError(
        `channels ${nameList(missing)} are not in the neighbour table; add them (a channel with no neighbours has a row of its own) or leave them out of the contrast`,
      );
    return { layout: { neighbours: 'table', positions }, graph: tableNeighbours(c.neighbours, [...channels]) };
  }
  const missing = channels.filter((_, i) => positions[i] === null);
  if (missing.length > 0) {
    throw new ContrastDataError(
      `channels ${nameList(missing)} have no position and no neighbour table: store positions at ingest (a BIDS _electrodes.tsv, --positions or a positions column), give neighbours (--neighbours FILE, or "neighbours" in the contrast), or average the channels (--channel-average)`,
    );
  }
  try {
    return { layout: { neighbours: 'positions', positions }, graph: positionNeighbours(positions as Position3[], channels) };
  } catch (e) {
    if (e instanceof AdjacencyError) throw new ContrastDataError(e.message);
    throw e;
  }
}
