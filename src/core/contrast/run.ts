/**
 * Runs a contrast end to end on the rows it reads and returns the compare result JSON
 * (docs/design.md: the contrast, the n per group, the exclusions, and the clusters with sign, mass, p,
 * frequency range and channels; signs are groups[1] minus groups[0]).
 */
import { INDIVIDUAL_BAND_MEASURES, type Contrast } from './spec.ts';
import type { IndividualCentre } from './individual-bands.ts';
import { ContrastDataError } from './assemble.ts';
import type { ContrastData, Exclusion } from './data.ts';
import { assembleContrast, type AssembledContrast, type Participation } from './assemble.ts';
import type { ChannelLayout } from './channel-layout.ts';
import {
  finishPermutationTest,
  preparePermutationTest,
  dataVary,
  runPermutations,
  type PermutationTestOptions,
  type PermutationTestResult,
  type NullMaxima,
  type PermutationRange,
  type PreparedPermutationTest,
  type ProgressCallback,
  type ClusterResult,
} from '../stats/index.ts';

export const RESEARCH_NOTE = 'bandwise is a research tool. Its results are not a diagnosis and must not be used for clinical decisions.';

/** A cluster as a compare result stores it: the permutation test's cluster without its point indices. */
export type CompareCluster = Omit<ClusterResult, 'points'>;

export interface CompareResult {
  kind: 'compare';
  note: string;
  contrast: Contrast;
  measure: string;
  n: Record<string, number>;
  subjects: Participation[];
  exclusions: Exclusion[];
  clusters: CompareCluster[];
  statistics: PermutationTestResult;
  /** measures that may be missing per channel × point (peak centre, peak width): the values each point rests on; null otherwise */
  valuesPerPoint: PointValues[] | null;
  /** points left out for too few values, in words (empty when none) */
  notes: string[];
  /** individual bands: each subject's centre and edges (absent for fixed bands) */
  individualCentres?: IndividualCentre[];
  /** the channels' positions (statistics.channels order) and where their neighbours came from */
  channelLayout: ChannelLayout;
}

export interface PointValues {
  channel: string;
  /** the point's frequency, Hz (band measures: the band centre) */
  freqHz: number;
  /** band name of a band measure, else null */
  band: string | null;
  /** values per group (or pairs, or subjects) */
  n: Record<string, number>;
  leftOut: boolean;
}

export function statsOptions(c: Contrast): PermutationTestOptions {
  return {
    statistic: c.statistic,
    permutations: c.permutations,
    seed: c.seed,
    clusterP: c.clusterP,
    clusterMeasure: c.correction === 'cluster-size' ? 'size' : c.correction === 'cluster-mass' ? 'mass' : 'none',
    tfce: c.correction === 'tfce' ? (c.tfce ?? true) : false,
  };
}

/** A contrast assembled and its statistics prepared: the same on every thread (deterministic). */
export interface PreparedCompare {
  contrast: Contrast;
  assembled: AssembledContrast;
  prepared: PreparedPermutationTest;
}

export function prepareCompare(c: Contrast, data: ContrastData): PreparedCompare {
  return prepareAssembled(c, assembleContrast(checkBandDefinition(c), data));
}

/** Individual bands apply to band-power measures (and the band check); any other measure is refused, not silently run on fixed bands. */
export function checkBandDefinition(c: Contrast): Contrast {
  if (c.bandDefinition === 'individual' && !INDIVIDUAL_BAND_MEASURES.includes(c.measure)) {
    throw new ContrastDataError(`individual bands apply to the measures ${INDIVIDUAL_BAND_MEASURES.join(' and ')} (and the band check), not to ${c.measure}`);
  }
  return c;
}

/** prepareCompare from the assembled contrast (a thread given the assembly, not the rows, prepares from here). */
export function prepareAssembled(c: Contrast, assembled: AssembledContrast): PreparedCompare {
  const options = statsOptions(c);
  options.frequencyAdjacency = assembled.layout.frequencyAdjacency;
  // the test's own input checks first: too few values at every point says more than "no variation"
  const prepared = preparePermutationTest(assembled.input, options);
  if (!dataVary(assembled.input))
    throw new ContrastDataError('the data do not vary: every subject has the same value at every point, so there is no difference to test');
  return { contrast: c, assembled, prepared };
}

/** The permutations [from, to) of part `index` of `parts` equal shares of `count` (split over threads). */
export function permutationShare(count: number, index: number, parts: number): PermutationRange {
  return { from: Math.floor((count * index) / parts), to: Math.floor((count * (index + 1)) / parts) };
}

/** Values per point and the notes on points left out (measures that may be missing). */
function pointValues(a: AssembledContrast, s: PermutationTestResult): { valuesPerPoint: PointValues[] | null; notes: string[] } {
  const m = s.missing;
  if (!m) return { valuesPerPoint: null, notes: [] };
  const F = s.freqsHz.length;
  const names = m.nPerPoint.length === 2 ? (s.groupNames ?? ['group 0', 'group 1']) : [s.design === 'paired' ? 'pairs' : 'subjects'];
  const leftOut = new Set(m.leftOut);
  const points: PointValues[] = s.channels.flatMap((channel, ci) =>
    s.freqsHz.map((freqHz, f) => {
      const p = ci * F + f;
      const b = a.layout.bands[f];
      return {
        channel,
        freqHz,
        band: b ? `${b.name} ${b.loHz}–${b.hiHz} Hz` : null,
        n: Object.fromEntries(names.map((g, k) => [g, m.nPerPoint[k][p]])),
        leftOut: leftOut.has(p),
      };
    }),
  );
  const notes: string[] = [];
  for (let f = 0; f < F; f++) {
    const out = points.filter((q, i) => i % F === f && q.leftOut);
    if (out.length === 0) continue;
    const where = out[0].band ?? `${out[0].freqHz} Hz`;
    const list = out
      .map(
        (q) =>
          `${q.channel} (${Object.entries(q.n)
            .map(([g, k]) => `${g} ${k}`)
            .join(', ')})`,
      )
      .join(', ');
    notes.push(`${where}: ${out.length} channel${out.length === 1 ? '' : 's'} left out for too few values (a point needs ${m.minimum}): ${list}`);
  }
  return { valuesPerPoint: points, notes };
}

/** The result from the prepared contrast and the null maxima of all its permutations. */
export function finishCompare(p: PreparedCompare, nulls: NullMaxima): CompareResult {
  const { contrast: c, assembled: a } = p;
  const statistics = finishPermutationTest(p.prepared, nulls);
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
    ...pointValues(a, statistics),
    ...(c.bandDefinition === 'individual' ? { individualCentres: a.individualCentres } : {}),
    channelLayout: a.channelLayout,
  };
}

/** The whole contrast on one thread; split over threads (prepareCompare, runPermutations of shares, finishCompare) it gives the same result. */
export function compare(c: Contrast, data: ContrastData, onProgress?: ProgressCallback): CompareResult {
  const p = prepareCompare(c, data);
  const nulls = runPermutations(p.prepared.test, { from: 0, to: p.prepared.test.scheme.count }, onProgress);
  return finishCompare(p, nulls);
}
