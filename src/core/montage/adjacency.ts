/**
 * Channel neighbour graphs for spatial clustering: neighbours[c] lists the indices of the
 * channels adjacent to channel c in the given channel list; always symmetric, never self-loops.
 * Positions by channel name (channelPosition): an electrode at its 10-10 site, a scalp pair
 * (Pz-Oz) halfway between its electrodes, an electrode against a mastoid (C3-M2) at the electrode.
 * - delaunayNeighbours: Delaunay triangulation (d3-delaunay) of the 2-D scalp projection of the
 *   10-10 positions, optionally pruning edges longer than maxDistance (chord on the unit sphere).
 * - distanceNeighbours: every pair closer than maxDistance (chord on the unit sphere; 1 unit ≈
 *   head radius; 0.5 joins the 10-20 nearest neighbours, about 36° apart).
 * - parseNeighbourTsv: a user table, one line per channel: `channel<TAB>neighbour,neighbour,…`.
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

/** Delaunay neighbours of the projected positions; maxDistance (unit-sphere chord) prunes long edges. */
export function delaunayNeighbours(channels: string[], options: { maxDistance?: number } = {}): number[][] {
  checkUnique(channels);
  const pos = positionsOf(channels);
  const n = channels.length;
  if (n < 2) return symmetric(n, []);
  const flat = pos.map(projectToDisk);
  // a triangulation leaves a repeated point without neighbours: say so instead
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      if (chord(pos[i], pos[j]) < 1e-9) throw new AdjacencyError(`channels "${channels[j]}" and "${channels[i]}" sit at one position; give a neighbour table instead`, 'channel', channels[i]);
    }
  }
  const delaunay = Delaunay.from(flat, (p) => p.x, (p) => p.y);
  const pairs: [number, number][] = [];
  for (let i = 0; i < n; i++) {
    for (const j of delaunay.neighbors(i)) {
      if (options.maxDistance === undefined || chord(pos[i], pos[j]) <= options.maxDistance) pairs.push([i, j]);
    }
  }
  return symmetric(n, pairs);
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

/**
 * Neighbours from a TSV text: one line per channel, `channel<TAB>n1,n2,…` (an optional header
 * line whose first cell is `channel`; blank lines and lines starting with # are skipped). Names
 * match case-insensitively; rows and neighbours naming channels outside `channels` are ignored
 * (a table for a larger cap serves a subset); a neighbour of itself, a line without a tab or an
 * empty channel name is an error naming the line. The result is symmetrised.
 */
export function parseNeighbourTsv(text: string, channels: string[]): number[][] {
  checkUnique(channels);
  const index = new Map(channels.map((c, i) => [c.trim().toUpperCase(), i]));
  const pairs: [number, number][] = [];
  const lines = text.split(/\r?\n/);
  for (let li = 0; li < lines.length; li++) {
    const line = lines[li];
    if (line.trim() === '' || line.trimStart().startsWith('#')) continue;
    const tab = line.indexOf('\t');
    if (tab < 0) throw new AdjacencyError(`neighbour table line ${li + 1}: expected "channel<TAB>neighbours", got "${line}"`, `line ${li + 1}`, line);
    const name = line.slice(0, tab).trim();
    if (name === '') throw new AdjacencyError(`neighbour table line ${li + 1}: empty channel name`, `line ${li + 1}`, line);
    if (li === 0 && name.toLowerCase() === 'channel') continue;
    const a = index.get(name.toUpperCase());
    const neighbours = line
      .slice(tab + 1)
      .split(',')
      .map((s) => s.trim())
      .filter((s) => s !== '');
    for (const nb of neighbours) {
      if (nb.toUpperCase() === name.toUpperCase()) throw new AdjacencyError(`neighbour table line ${li + 1}: channel "${name}" lists itself`, `line ${li + 1}`, nb);
      const b = index.get(nb.toUpperCase());
      if (a !== undefined && b !== undefined) pairs.push([a, b]);
    }
  }
  return symmetric(channels.length, pairs);
}
