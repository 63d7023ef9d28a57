/**
 * Runs a contrast end to end on the rows it reads and returns the compare result JSON
 * (DESIGN.md: the contrast, the n per group, the exclusions, and the clusters with sign, mass, p,
 * frequency range and channels; signs are groups[1] minus groups[0]).
 */
import type { Contrast } from './spec.ts';
import type { ContrastData, Exclusion } from './data.ts';
import { assembleContrast, type Participation } from './assemble.ts';
import { runContrast, type ContrastOptions, type ContrastResult, type ProgressCallback } from '../stats/index.ts';

export const RESEARCH_NOTE = 'bandwise is a research tool. Its results are not a diagnosis and must not be used for clinical decisions.';

export interface CompareCluster {
  sign: 1 | -1;
  mass: number;
  size: number;
  p: number;
  fminHz: number;
  fmaxHz: number;
  channels: string[];
}

export interface CompareResult {
  kind: 'compare';
  note: string;
  contrast: Contrast;
  measure: string;
  n: Record<string, number>;
  subjects: Participation[];
  exclusions: Exclusion[];
  clusters: CompareCluster[];
  statistics: ContrastResult;
}

export function statsOptions(c: Contrast): ContrastOptions {
  return {
    statistic: c.statistic,
    permutations: c.permutations,
    seed: c.seed,
    clusterP: c.clusterP,
    clusterMeasure: c.correction === 'cluster-size' ? 'size' : c.correction === 'cluster-mass' ? 'mass' : 'none',
    tfce: c.correction === 'tfce' ? (c.tfce ?? true) : false,
  };
}

export function compare(c: Contrast, data: ContrastData, onProgress?: ProgressCallback): CompareResult {
  const a = assembleContrast(c, data);
  const options = statsOptions(c);
  options.frequencyAdjacency = a.layout.frequencyAdjacency;
  const statistics = runContrast(a.input, options, onProgress);
  return {
    kind: 'compare',
    note: RESEARCH_NOTE,
    contrast: c,
    measure: a.layout.description,
    n: a.nPerGroup,
    subjects: a.subjects,
    exclusions: a.excluded,
    clusters: statistics.clusters.map((k) => ({ sign: k.sign, mass: k.mass, size: k.size, p: k.p, fminHz: k.fminHz, fmaxHz: k.fmaxHz, channels: k.channels })),
    statistics,
  };
}
