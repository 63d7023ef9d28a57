/**
 * Channel neighbour graphs for spatial clustering: neighbours[c] lists the indices of the
 * channels adjacent to channel c in the given channel list; always symmetric, never self-loops.
 * - positionNeighbours: Delaunay triangulation (d3-delaunay) of the 2-D scalp projection
 *   (projectToDisk) of positions on the unit sphere, without its long edges: an edge longer than
 *   RIM_EDGE_FACTOR (2) times the median edge of the triangulation (3-D chord) is dropped. A
 *   triangulation fills every concave stretch of a layout's outline (the rim of a dense net, the
 *   gap of a missing electrode at the edge) with edges between electrodes that have others between
 *   them; twice the typical spacing is our limit (no edge of the sparse 10-20 montages reaches it:
 *   at most 1.64× in the 13-channel demo montage with mastoids, 1.31× in the 19 10-20 sites and
 *   mastoids; in the 64-site 10-10 set the two rim edges PO7–TP9 and PO8–TP10, 2.13×, go).
 *   Delaunay rather than a distance rule because it needs no radius tuned to each cap's spacing
 *   and keeps every electrode joined where a cap is sparse (mastoids, a low-density region).
 * - delaunayNeighbours: the same for channel names at their 10-10 positions (channelPosition: an
 *   electrode at its site, a scalp pair halfway between its electrodes, C3-M2 at C3).
 * - distanceNeighbours: every pair closer than maxDistance (chord on the unit sphere; 1 unit ≈
 *   head radius; 0.5 joins the 10-20 nearest neighbours, about 36° apart).
 * - a user table: neighbourTable reads a TSV, one line per channel: `channel<TAB>neighbour,neighbour,…`;
 *   tableNeighbours turns a table ({channel: [neighbours]}, the contrast's "neighbours") into the graph.
 * A single channel, or a channel average, has no spatial neighbours (clusters run over
 * frequency only): pass null as the graph.
 */
import { Delaunay } from 'd3-delaunay';
import { channelPosition, projectToDisk, type Position3 } from './positions.ts';

export class AdjacencyError extends Error {
  constructor(
    message: string,
    readonly field: string,
    readonly value: string,
  ) {
    super(message);
    this.name = 'AdjacencyError';
  }
}

function positionsOf(channels: string[]): Position3[] {
  return channels.map((name) => {
    const p = channelPosition(name);
    if (!p) throw new AdjacencyError(`channel "${name}" has no 10-10 position; give a neighbour table instead`, 'channel', name);
    return p;
  });
}

function chord(a: Position3, b: Position3): number {
  return Math.hypot(a.x - b.x, a.y - b.y, a.z - b.z);
}

function symmetric(n: number, pairs: Iterable<[number, number]>): number[][] {
  const sets = Array.from({ length: n }, () => new Set<number>());
  for (const [a, b] of pairs) {
    if (a === b) continue;
    sets[a].add(b);
    sets[b].add(a);
  }
  return sets.map((s) => [...s].sort((x, y) => x - y));
}

function checkUnique(channels: string[]): void {
  const seen = new Set<string>();
  for (const c of channels) {
    const key = c.trim().toUpperCase();
    if (seen.has(key)) throw new AdjacencyError(`channel "${c}" is listed twice`, 'channel', c);
    seen.add(key);
  }
}

/** An edge longer than this multiple of the triangulation's median edge (3-D chord) is dropped (see above). */
export const RIM_EDGE_FACTOR = 2;

/**
 * Delaunay neighbours of positions on the unit sphere (one per name; the names only for
 * messages), without edges longer than RIM_EDGE_FACTOR × the median edge; maxDistance (unit-sphere
 * chord) prunes further.
 */
export function positionNeighbours(pos: readonly Position3[], names: readonly string[], options: { maxDistance?: number } = {}): number[][] {
  const n = pos.length;
  if (n < 2) return symmetric(n, []);
  // a triangulation leaves a repeated point without neighbours: say so instead
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      if (chord(pos[i], pos[j]) < 1e-9)
        throw new AdjacencyError(`channels "${names[j]}" and "${names[i]}" sit at one position; give a neighbour table instead`, 'channel', names[i]);
    }
  }
  const flat = pos.map(projectToDisk);
  const delaunay = Delaunay.from(
    flat,
    (p) => p.x,
    (p) => p.y,
  );
  const edges: [number, number, number][] = [];
  for (let i = 0; i < n; i++) for (const j of delaunay.neighbors(i)) if (j > i) edges.push([i, j, chord(pos[i], pos[j])]);
  const lengths = edges.map((e) => e[2]).sort((a, b) => a - b);
  const mid = lengths.length / 2;
  const median = lengths.length % 2 === 1 ? lengths[Math.floor(mid)] : (lengths[mid - 1] + lengths[mid]) / 2;
  const limit = Math.min(RIM_EDGE_FACTOR * median, options.maxDistance ?? Infinity);
  return symmetric(
    n,
    edges.filter((e) => e[2] <= limit).map(([a, b]): [number, number] => [a, b]),
  );
}

/** Delaunay neighbours of channel names at their 10-10 positions (positionNeighbours). */
export function delaunayNeighbours(channels: string[], options: { maxDistance?: number } = {}): number[][] {
  checkUnique(channels);
  return positionNeighbours(positionsOf(channels), channels, options);
}

/** Pairs of channels whose unit-sphere chord distance is at most maxDistance. */
export function distanceNeighbours(channels: string[], maxDistance: number): number[][] {
  if (!(maxDistance > 0)) throw new AdjacencyError(`maxDistance must be positive, got ${maxDistance}`, 'maxDistance', String(maxDistance));
  checkUnique(channels);
  const pos = positionsOf(channels);
  const pairs: [number, number][] = [];
  for (let i = 0; i < pos.length; i++) for (let j = i + 1; j < pos.length; j++) if (chord(pos[i], pos[j]) <= maxDistance) pairs.push([i, j]);
  return symmetric(pos.length, pairs);
}

/** A neighbour table: each channel's neighbours by name (symmetrised when turned into a graph). */
export type NeighbourTable = Record<string, string[]>;

/**
 * Reads a neighbour TSV: one line per channel, `channel<TAB>n1,n2,…` (an optional header line
 * whose first cell is `channel`; blank lines and lines starting with # are skipped; a channel
 * with no neighbours has an empty second cell). A neighbour of itself, a line without a tab, an
 * empty channel name or a channel on two lines is an error naming the line.
 */
export function neighbourTable(text: string): NeighbourTable {
  const table: NeighbourTable = {};
  const lineOf = new Map<string, number>();
  let headerSeen = false;
  const lines = text.replace(/^\uFEFF/, '').split(/\r?\n/);
  for (let li = 0; li < lines.length; li++) {
    const line = lines[li];
    if (line.trim() === '' || line.trimStart().startsWith('#')) continue;
    const tab = line.indexOf('\t');
    if (tab < 0) throw new AdjacencyError(`neighbour table line ${li + 1}: expected "channel<TAB>neighbours", got "${line}"`, `line ${li + 1}`, line);
    const name = line.slice(0, tab).trim();
    if (name === '') throw new AdjacencyError(`neighbour table line ${li + 1}: empty channel name`, `line ${li + 1}`, line);
    const first = lineOf.size === 0 && !headerSeen;
    headerSeen = true;
    if (first && name.toLowerCase() === 'channel') continue;
    const key = name.toUpperCase();
    if (lineOf.has(key))
      throw new AdjacencyError(`neighbour table line ${li + 1}: channel "${name}" is on line ${lineOf.get(key)} already`, `line ${li + 1}`, name);
    lineOf.set(key, li + 1);
    const neighbours = line
      .slice(tab + 1)
      .split(',')
      .map((s) => s.trim())
      .filter((s) => s !== '');
    for (const nb of neighbours) {
      if (nb.toUpperCase() === key) throw new AdjacencyError(`neighbour table line ${li + 1}: channel "${name}" lists itself`, `line ${li + 1}`, nb);
    }
    table[name] = neighbours;
  }
  return table;
}

/**
 * The graph of a neighbour table over `channels`: names match case-insensitively; rows and
 * neighbours naming channels outside `channels` are ignored (a table for a larger cap serves a
 * subset); the result is symmetrised.
 */
export function tableNeighbours(table: NeighbourTable, channels: string[]): number[][] {
  checkUnique(channels);
  const index = new Map(channels.map((c, i) => [c.trim().toUpperCase(), i]));
  const pairs: [number, number][] = [];
  for (const [name, list] of Object.entries(table)) {
    const a = index.get(name.trim().toUpperCase());
    if (a === undefined) continue;
    for (const nb of list) {
      const b = index.get(nb.trim().toUpperCase());
      if (b !== undefined) pairs.push([a, b]);
    }
  }
  return symmetric(channels.length, pairs);
}

/** The channels a table says nothing about (neither a row of their own nor anyone's neighbour). */
export function channelsMissingFrom(table: NeighbourTable, channels: readonly string[]): string[] {
  const named = new Set<string>();
  for (const [name, list] of Object.entries(table)) {
    named.add(name.trim().toUpperCase());
    for (const nb of list) named.add(nb.trim().toUpperCase());
  }
  return channels.filter((c) => !named.has(c.trim().toUpperCase()));
}

/** Neighbours from a TSV text (neighbourTable) over `channels` (tableNeighbours). */
export function parseNeighbourTsv(text: string, channels: string[]): number[][] {
  return tableNeighbours(neighbourTable(text), channels);
}
