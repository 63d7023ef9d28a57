/**
 * The graph over points (channel c, frequency bin f), point index c·nFreqs + f: neighbouring
 * bins of one channel are adjacent (frequency adjacency), and the same bin of two neighbouring
 * channels is adjacent (spatial adjacency, from a channel neighbour graph). Returned as a flat
 * edge list [a0, b0, a1, b1, …] with a < b, precomputed once and reused by every permutation.
 */
export interface PointGraphOptions {
  /** neighbours[c] = indices of channels adjacent to channel c (symmetric); null: no spatial edges */
  channelNeighbours: number[][] | null;
  /** join neighbouring frequency bins (default true) */
  frequency?: boolean;
}

export function pointGraphEdges(nChannels: number, nFreqs: number, options: PointGraphOptions): Int32Array {
  const edges: number[] = [];
  if (options.frequency !== false) {
    for (let c = 0; c < nChannels; c++) for (let f = 0; f + 1 < nFreqs; f++) edges.push(c * nFreqs + f, c * nFreqs + f + 1);
  }
  const nb = options.channelNeighbours;
  if (nb) {
    if (nb.length !== nChannels) throw new RangeError(`channel neighbour graph has ${nb.length} entries for ${nChannels} channels`);
    for (let c = 0; c < nChannels; c++) {
      for (const d of nb[c]) {
        if (!Number.isInteger(d) || d < 0 || d >= nChannels) throw new RangeError(`channel neighbour index ${d} of channel ${c} is out of range`);
        if (d <= c) continue; // each pair once
        for (let f = 0; f < nFreqs; f++) edges.push(c * nFreqs + f, d * nFreqs + f);
      }
    }
  }
  return Int32Array.from(edges);
}

/** Compressed adjacency lists of an edge list: neighbours of p are neighbours[start[p] … start[p + 1]). */
export interface AdjacencyLists {
  start: Int32Array;
  neighbours: Int32Array;
}

export function adjacencyLists(nPoints: number, edges: Int32Array): AdjacencyLists {
  const start = new Int32Array(nPoints + 1);
  for (let e = 0; e < edges.length; e++) start[edges[e] + 1]++;
  for (let p = 0; p < nPoints; p++) start[p + 1] += start[p];
  const neighbours = new Int32Array(edges.length);
  const fill = start.slice(0, nPoints);
  for (let e = 0; e < edges.length; e += 2) {
    neighbours[fill[edges[e]]++] = edges[e + 1];
    neighbours[fill[edges[e + 1]]++] = edges[e];
  }
  return { start, neighbours };
}
