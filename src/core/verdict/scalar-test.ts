/**
 * One number per subject (a band summary of a measure, averaged over the channel set), tested
 * with the statistics engine's permutation machinery (runPermutationTest), as a single point.
 *
 * A single point has no neighbours, so its only possible cluster is the point itself: with a
 * cluster-forming threshold next to zero (two-tailed p just below 1), the cluster mass is the
 * point's t and the null maximum of each permutation is |t*|. The cluster p is then the plain
 * two-tailed permutation p of |t|: (1 + #{|t*| ≥ |t|})/(1 + m) (Phipson & Smyth 2010).
 *
 * Values come from assembleContrast (src/core/contrast), so subjects, exclusions and the design
 * are exactly those of a compare run; derived values (a band mean of the residual, the aperiodic
 * level in the band, the difference of two flanks) reduce or combine assembled rows of the same
 * subjects.
 */
import { uniqueExclusions } from '../contrast/exclusions.ts';
import type { Contrast } from '../contrast/spec.ts';
import type { ContrastData, Exclusion } from '../contrast/data.ts';
import { assembleContrast, type AssembledContrast, type BandResolver, type Participation } from '../contrast/assemble.ts';
import {
  preparePermutationTest,
  runPermutationTest,
  type PermutationTestInput,
  type Design,
  type ProgressCallback,
  type StatisticName,
} from '../stats/index.ts';

/** Two-tailed cluster-forming p that makes the threshold |t| ≈ 1e-9: every non-zero t is its own cluster. */
const ONE_POINT_CLUSTER_P = 1 - 1e-9;

/** The result of one scalar test, signs as the contrast's (groups[1] − groups[0], second − first, r). */
export interface ScalarTest {
  /** what was tested, in words, with units */
  measure: string;
  n: Record<string, number>;
  statistic: StatisticName;
  /** t of the point statistic (correlations: t of r) */
  t: number;
  df: number;
  effectKind: 'hedges-g' | 'r' | 'partial-r';
  /** effect size with its confidence interval */
  effect: number;
  ciLow: number;
  ciHigh: number;
  level: number;
  /** raw difference in the measure's units (null for correlations) */
  difference: number | null;
  /** two-tailed permutation p of |t| */
  p: number;
  permutations: number;
  exact: boolean;
  seed: number;
  /** subjects left out of this test, with reasons */
  excluded: Exclusion[];
}

/** Per-subject values of one test before it runs: rows of `values` follow `subjects`. */
export interface ScalarValues {
  measure: string;
  subjects: Participation[];
  excluded: Exclusion[];
  /** first (or only) condition, one value per subject */
  values: Float64Array;
  /** second condition of a paired design */
  second: Float64Array | null;
  /** the design of the assembled contrast these values came from (rows as assembled) */
  design: Design;
  /** row index of each subject in that assembled design */
  rows: number[];
}

/** Assembles the contrast with a channel average over its channels (frequency-only points); bandsFor as assembleContrast's. */
export function assembleAveraged(c: Contrast, data: ContrastData, overrides: Partial<Contrast>, bandsFor?: BandResolver): AssembledContrast {
  return assembleContrast({ ...c, ...overrides, channelAverage: true }, data, bandsFor);
}

/**
 * Combines assembled contrasts of the same design row by row into one value per subject:
 * f(rowOfFirst, rowOfSecond, …) over the subjects all of them kept. Each row is the
 * channel-averaged measure at the contrast's points; f is also told the subject and the
 * condition (0, or 1 for a paired design's second), for values over a subject's own band.
 */
export function combine(measure: string, parts: AssembledContrast[], f: (rows: Float64Array[], subject: string, condition: 0 | 1) => number): ScalarValues {
  const index = parts.map((a) => new Map(a.subjects.map((s, i) => [s.subject, i])));
  const first = parts[0];
  const keptRows: number[] = [];
  const subjects: Participation[] = [];
  for (let i = 0; i < first.subjects.length; i++) {
    const name = first.subjects[i].subject;
    if (index.every((m) => m.has(name))) {
      keptRows.push(i);
      subjects.push(first.subjects[i]);
    }
  }
  const excluded = uniqueExclusions(parts.flatMap((a) => a.excluded));
  const paired = first.input.design.kind === 'paired';
  const values = new Float64Array(subjects.length);
  const second = paired ? new Float64Array(subjects.length) : null;
  const pick = (a: AssembledContrast, row: number, which: 'data' | 'second'): Float64Array => {
    const P = a.input.freqsHz.length;
    const m = which === 'data' ? a.input.data : (a.input.design as { second: Float64Array }).second;
    return Float64Array.from(m.subarray(row * P, (row + 1) * P));
  };
  subjects.forEach((s, k) => {
    const rows = parts.map((_, j) => (j === 0 ? keptRows[k] : index[j].get(s.subject)!));
    values[k] = f(
      parts.map((a, j) => pick(a, rows[j], 'data')),
      s.subject,
      0,
    );
    if (second)
      second[k] = f(
        parts.map((a, j) => pick(a, rows[j], 'second')),
        s.subject,
        1,
      );
  });
  return { measure, subjects, excluded, values, second, design: first.input.design, rows: keptRows };
}

/** One assembled contrast reduced to one value per subject: f(row, subject, condition). */
export function reduce(measure: string, a: AssembledContrast, f: (row: Float64Array, subject: string, condition: 0 | 1) => number): ScalarValues {
  return combine(measure, [a], (rows, subject, condition) => f(rows[0], subject, condition));
}

/** Mean of the row's points whose frequency lies in [loHz, hiHz] (a spectral measure over a subject's own band); NaN when none does. */
export function bandMean(row: Float64Array, freqsHz: readonly number[], loHz: number, hiHz: number): number {
  let s = 0;
  let n = 0;
  for (let i = 0; i < row.length; i++) {
    if (freqsHz[i] >= loHz - 1e-9 && freqsHz[i] <= hiHz + 1e-9) {
      s += row[i];
      n++;
    }
  }
  return n > 0 ? s / n : NaN;
}

/** Mean of a row (e.g. the residual over the band's bins). */
export const rowMean = (r: Float64Array): number => {
  let s = 0;
  for (let i = 0; i < r.length; i++) s += r[i];
  return s / r.length;
};

/** The design restricted to the given rows of the assembled design (same order). */
function subsetDesign(design: Design, rows: number[], second: Float64Array | null): Design {
  const take = (v: ArrayLike<number>) => rows.map((r) => v[r]);
  switch (design.kind) {
    case 'groups':
      return {
        kind: 'groups',
        group: take(design.group),
        groupNames: design.groupNames,
        ...(design.nuisance ? { nuisance: design.nuisance.map((c) => ({ name: c.name, values: take(c.values) })) } : {}),
      };
    case 'covariate':
      return {
        kind: 'covariate',
        covariate: take(design.covariate),
        covariateName: design.covariateName,
        ...(design.nuisance ? { nuisance: design.nuisance.map((c) => ({ name: c.name, values: take(c.values) })) } : {}),
      };
    case 'paired':
      return { kind: 'paired', second: second!, conditionNames: design.conditionNames };
    case 'one-sample':
      return { kind: 'one-sample' };
  }
}

function nPerGroup(design: Design, n: number): Record<string, number> {
  if (design.kind === 'groups') {
    const [g0, g1] = design.groupNames ?? ['group 0', 'group 1'];
    let n1 = 0;
    for (let i = 0; i < n; i++) n1 += design.group[i];
    return { [g0]: n - n1, [g1]: n1 };
  }
  return design.kind === 'paired' ? { pairs: n } : { subjects: n };
}

export interface ScalarTestOptions {
  statistic?: StatisticName;
  permutations: number;
  seed: number;
  confidenceLevel?: number;
  onProgress?: ProgressCallback;
}

function scalarInput(v: ScalarValues): PermutationTestInput {
  return { channels: ['value'], freqsHz: [0], data: v.values, design: subsetDesign(v.design, v.rows, v.second), channelNeighbours: null };
}

/** The effect size of one value per subject with its interval, without permutations. */
export function scalarEffect(
  v: ScalarValues,
  o: Pick<ScalarTestOptions, 'statistic' | 'confidenceLevel'>,
): Pick<ScalarTest, 'effectKind' | 'effect' | 'ciLow' | 'ciHigh' | 'level' | 'n'> {
  const input = scalarInput(v);
  const e = preparePermutationTest(input, { statistic: o.statistic, permutations: 1, clusterMeasure: 'none', confidenceLevel: o.confidenceLevel }).effect;
  return { effectKind: e.kind, effect: e.value[0], ciLow: e.ciLow[0], ciHigh: e.ciHigh[0], level: e.level, n: nPerGroup(input.design, v.values.length) };
}

/** Runs the permutation test of one value per subject (see the header for the p-value). */
export function runScalarTest(v: ScalarValues, o: ScalarTestOptions): ScalarTest {
  const input = scalarInput(v);
  const design = input.design;
  const r = runPermutationTest(
    input,
    {
      statistic: o.statistic,
      permutations: o.permutations,
      seed: o.seed,
      clusterP: ONE_POINT_CLUSTER_P,
      clusterMeasure: 'mass',
      frequencyAdjacency: false,
      tfce: false,
      confidenceLevel: o.confidenceLevel,
    },
    o.onProgress,
  );
  const df = Array.isArray(r.df) ? r.df[0] : r.df;
  return {
    measure: v.measure,
    n: nPerGroup(design, v.values.length),
    statistic: r.statistic,
    t: r.stat[0],
    df,
    effectKind: r.effect.kind,
    effect: r.effect.value[0],
    ciLow: r.effect.ciLow[0],
    ciHigh: r.effect.ciHigh[0],
    level: r.effect.level,
    difference: r.effect.difference ? r.effect.difference[0] : null,
    // no cluster only when |t| is below ~1e-9: nothing beats zero, p = 1
    p: r.clusters.length > 0 ? r.clusters[0].p : 1,
    permutations: r.permutations,
    exact: r.exact,
    seed: r.seed,
    excluded: v.excluded,
  };
}
