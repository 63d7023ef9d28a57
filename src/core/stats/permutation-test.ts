/**
 * One contrast end to end: check the input, build the design's point statistic, the point graph
 * and the permutation scheme (preparePermutationTest), run the permutations (permutation-engine.ts),
 * and turn observed maps and null maxima into the JSON-able result (finishPermutationTest).
 * Types and conventions are documented in index.ts.
 */
import type {
  PermutationTestInput,
  PermutationTestOptions,
  PermutationTestResult,
  ClusterResult,
  Design,
  EffectResult,
  Matrix,
  StatisticName,
} from './index.ts';
import type { PointStatistic } from './point-statistic.ts';
import { TwoGroupT } from './two-group-t.ts';
import { OneSampleT } from './one-sample-t.ts';
import { CorrelationT } from './correlation-t.ts';
import { LinearModelT } from './linear-model-t.ts';
import { TwoGroupTMissing } from './two-group-t-missing.ts';
import { countValues, minimumText, type MissingSummary } from './missing.ts';
import { makeScheme } from './relabelling.ts';
import { pointGraphEdges } from './point-graph.ts';
import { ClusterWork, findClusters, type Cluster } from './clusters.ts';
import { TFCE_DEFAULTS, TfceWork, tfceScores, type TfceParameters } from './tfce.ts';
import { twoTailedCriticalT, twoTailedP } from './distributions.ts';
import { correlationEffect, hedgesGOneSample, hedgesGTwoGroups, type EffectSize } from './effect-size.ts';
import { permutationP, runPermutations, type NullMaxima, type PermutationTest, type ProgressCallback } from './permutation-engine.ts';
import { delaunayNeighbours } from '../montage/adjacency.ts';

export class PermutationTestInputError extends Error {
  constructor(
    message: string,
    readonly field: string,
    readonly value: unknown,
  ) {
    super(message);
    this.name = 'PermutationTestInputError';
  }
}

export interface PreparedPermutationTest {
  input: PermutationTestInput;
  statistic: StatisticName;
  test: PermutationTest;
  nSubjects: number;
  stat: Float64Array;
  df: Float64Array;
  effect: EffectSize;
  observedClusters: Cluster[];
  tfceScore: Float64Array | null;
  clusterP: number;
  frequencyAdjacency: boolean;
  channelNeighbours: number[][] | null;
  /** values per point and the points left out, when the data hold missing values (NaN) */
  missing: MissingSummary | null;
}

function fail(field: string, value: unknown, message: string): never {
  throw new PermutationTestInputError(`${field}: ${message}`, field, value);
}

function checkFinite(field: string, values: ArrayLike<number>, length: number): void {
  if (values.length !== length) fail(field, values.length, `expected ${length} values, got ${values.length}`);
  for (let i = 0; i < length; i++) if (!Number.isFinite(values[i])) fail(`${field}[${i}]`, values[i], 'not a finite number');
}

/** Subjects (rows) of a matrix; NaN is allowed as a missing value when `allowMissing`, ±Infinity never. */
function checkMatrix(field: string, data: Matrix, input: PermutationTestInput): { n: number; missing: boolean } {
  const P = input.channels.length * input.freqsHz.length;
  if (!(data instanceof Float32Array || data instanceof Float64Array)) fail(field, typeof data, 'expected a Float32Array or Float64Array');
  if (data.length % P !== 0) fail(field, data.length, `length is not a multiple of channels × bins = ${P}`);
  const n = data.length / P;
  let missing = false;
  for (let i = 0; i < data.length; i++) {
    if (!Number.isFinite(data[i])) {
      if (input.allowMissing && Number.isNaN(data[i])) {
        missing = true;
        continue;
      }
      const s = Math.floor(i / P);
      const p = i % P;
      const F = input.freqsHz.length;
      fail(field, data[i], `subject row ${s}, channel ${input.channels[Math.floor(p / F)]}, ${input.freqsHz[p % F]} Hz is not a finite number`);
    }
  }
  return { n, missing };
}

/** Whether some point's values (paired: second minus first) differ between subjects; missing values are passed over. */
/**
 * Whether any point's values differ between subjects (paired: the differences), missing values
 * left out. A contrast with none has nothing to test (a t statistic divides by the spread: with
 * none it is undefined, not 0; common practice); contrasts refuse it (src/core/contrast/run.ts),
 * while a band check's single value (e.g. a peak height of 0 for everyone) is tested as it is.
 */
export function dataVary(input: PermutationTestInput): boolean {
  const P = input.channels.length * input.freqsHz.length;
  const n = Math.floor(input.data.length / P);
  const second = input.design.kind === 'paired' ? input.design.second : null;
  for (let p = 0; p < P; p++) {
    let first = NaN;
    for (let s = 0; s < n; s++) {
      const v = second ? second[s * P + p] - input.data[s * P + p] : input.data[s * P + p];
      if (Number.isNaN(v)) continue;
      if (Number.isNaN(first)) first = v;
      else if (v !== first) return true;
    }
  }
  return false;
}

function checkNuisance(design: { nuisance?: { name: string; values: ArrayLike<number> }[] }, n: number): ArrayLike<number>[] {
  return (design.nuisance ?? []).map((c, i) => {
    checkFinite(`design.nuisance[${i}] (${c.name})`, c.values, n);
    return c.values;
  });
}

function buildKernel(
  input: PermutationTestInput,
  n: number,
  P: number,
  statistic: StatisticName | undefined,
  dataMissing: boolean,
): { kernel: PointStatistic; statistic: StatisticName; labels?: Uint8Array; d?: Float64Array; missing: MissingSummary | null } {
  const design: Design = input.design;
  const data = input.data;
  const noMissing = (what: string) =>
    fail(
      'data',
      'NaN',
      `missing values per point are supported for two groups (welch-t, student-t), paired-t and one-sample-t, not for ${what}: every subject needs a value at every point`,
    );
  switch (design.kind) {
    case 'groups': {
      checkFinite('design.group', design.group, n);
      const labels = new Uint8Array(n);
      const count = [0, 0];
      for (let s = 0; s < n; s++) {
        const g = design.group[s];
        if (g !== 0 && g !== 1) fail(`design.group[${s}]`, g, 'group labels must be 0 or 1');
        labels[s] = g;
        count[g]++;
      }
      if (count[0] < 2 || count[1] < 2) fail('design.group', count, `each group needs at least 2 subjects, got ${count[0]} and ${count[1]}`);
      const nuisance = checkNuisance(design, n);
      if (nuisance.length > 0) {
        if (statistic !== undefined && statistic !== 'linear-model-t')
          fail('options.statistic', statistic, 'with nuisance covariates the statistic is linear-model-t');
        if (dataMissing) noMissing('a linear model with nuisance covariates');
        return { kernel: new LinearModelT(data, n, P, labels, nuisance), statistic: 'linear-model-t', labels, missing: null };
      }
      const chosen = statistic ?? 'welch-t';
      if (chosen !== 'welch-t' && chosen !== 'student-t') fail('options.statistic', chosen, 'a groups design uses welch-t or student-t');
      const variance = chosen === 'welch-t' ? 'welch' : 'pooled';
      if (dataMissing) {
        const missing = countValues(data, n, P, labels);
        return { kernel: new TwoGroupTMissing(data, n, P, labels, variance, missing.keep), statistic: chosen, labels, missing };
      }
      return { kernel: new TwoGroupT(data, n, P, labels, variance), statistic: chosen, labels, missing: null };
    }
    case 'paired': {
      const second = checkMatrix('design.second', design.second, input);
      if (second.n !== n) fail('design.second', second.n, `the second condition has ${second.n} subjects, the first ${n}`);
      if (statistic !== undefined && statistic !== 'paired-t') fail('options.statistic', statistic, 'a paired design uses paired-t');
      const d = new Float64Array(n * P);
      // within-subject differences, second − first (NaN where either is missing)
      for (let i = 0; i < d.length; i++) d[i] = design.second[i] - data[i];
      return { ...oneSampleKernel(d, n, P, dataMissing || second.missing), statistic: 'paired-t', d };
    }
    case 'one-sample': {
      if (statistic !== undefined && statistic !== 'one-sample-t') fail('options.statistic', statistic, 'a one-sample design uses one-sample-t');
      const d = Float64Array.from(data);
      return { ...oneSampleKernel(d, n, P, dataMissing), statistic: 'one-sample-t', d };
    }
    case 'covariate': {
      checkFinite('design.covariate', design.covariate, n);
      if (dataMissing) noMissing('a covariate design');
      const nuisance = checkNuisance(design, n);
      if (nuisance.length > 0) {
        if (statistic !== undefined && statistic !== 'linear-model-t')
          fail('options.statistic', statistic, 'with nuisance covariates the statistic is linear-model-t');
        return { kernel: new LinearModelT(data, n, P, design.covariate, nuisance), statistic: 'linear-model-t', missing: null };
      }
      const chosen = statistic ?? 'pearson';
      if (chosen !== 'pearson' && chosen !== 'spearman') fail('options.statistic', chosen, 'a covariate design uses pearson or spearman');
      return { kernel: new CorrelationT(data, n, P, design.covariate, chosen), statistic: chosen, missing: null };
    }
    default:
      return fail('design.kind', (design as { kind: unknown }).kind, 'expected groups, paired, one-sample or covariate');
  }
}

/** The one-sample kernel of the values (or paired differences) d: complete data, or with missing values per point. */
function oneSampleKernel(d: Float64Array, n: number, P: number, anyMissing: boolean): { kernel: PointStatistic; missing: MissingSummary | null } {
  if (!anyMissing) return { kernel: new OneSampleT(d, n, P), missing: null };
  const missing = countValues(d, n, P, null);
  return { kernel: new OneSampleT(d, n, P, missing.keep), missing };
}

function tfceParameters(option: PermutationTestOptions['tfce']): TfceParameters | null {
  if (!option) return null;
  const p = { ...TFCE_DEFAULTS, ...(option === true ? {} : option) };
  for (const key of ['E', 'H', 'dh'] as const) if (!(p[key] > 0)) fail(`options.tfce.${key}`, p[key], 'must be positive');
  return p;
}

/** Checks the input and builds everything a permutation run needs (deterministic: same input → same object). */
export function preparePermutationTest(input: PermutationTestInput, options: PermutationTestOptions = {}): PreparedPermutationTest {
  const { channels, freqsHz } = input;
  if (!Array.isArray(channels) || channels.length === 0) fail('channels', channels, 'at least one channel is needed');
  if (new Set(channels).size !== channels.length) fail('channels', channels, 'channel names must be unique');
  if (!Array.isArray(freqsHz) || freqsHz.length === 0) fail('freqsHz', freqsHz, 'at least one frequency bin is needed');
  for (let f = 0; f < freqsHz.length; f++) {
    if (!Number.isFinite(freqsHz[f]) || (f > 0 && !(freqsHz[f] > freqsHz[f - 1])))
      fail(`freqsHz[${f}]`, freqsHz[f], 'frequencies must be finite and ascending');
  }
  const P = channels.length * freqsHz.length;
  const { n, missing: dataMissing } = checkMatrix('data', input.data, input);
  if (n < 3) fail('data', n, 'at least 3 subjects are needed');
  const permutations = options.permutations ?? 1000;
  const seed = options.seed ?? 1;
  const clusterP = options.clusterP ?? 0.05;
  if (!(clusterP > 0 && clusterP < 1)) fail('options.clusterP', clusterP, 'must lie in (0, 1)');
  if (!Number.isInteger(permutations) || permutations < 1) fail('options.permutations', permutations, 'must be a positive integer');
  if (!Number.isFinite(seed)) fail('options.seed', seed, 'must be a finite number');
  const clusterMeasure = options.clusterMeasure ?? 'mass';
  if (!['mass', 'size', 'none'].includes(clusterMeasure)) fail('options.clusterMeasure', clusterMeasure, 'expected mass, size or none');
  const frequencyAdjacency = options.frequencyAdjacency ?? true;
  const level = options.confidenceLevel ?? 0.95;
  if (!(level > 0 && level < 1)) fail('options.confidenceLevel', level, 'must lie in (0, 1)');

  const { kernel, statistic, labels, d, missing } = buildKernel(input, n, P, options.statistic, dataMissing);
  if (kernel.df < 1) fail('data', n, `too few subjects for ${statistic}: ${kernel.df} degrees of freedom`);
  if (missing && !missing.keep.includes(1))
    fail('data', missing.missing, `no point has ${minimumText(missing.counts.length === 2)}: every point has too many missing values`);
  const stat = new Float64Array(P);
  const df = new Float64Array(P);
  kernel.compute(kernel.observedRelabelling(), stat, df);

  let effect: EffectSize;
  if (kernel instanceof CorrelationT) {
    effect = correlationEffect('r', kernel.r, null, n, 0, level);
  } else if (kernel instanceof LinearModelT) {
    // partial correlation of the effect of interest given the nuisance covariates: r = t/√(t² + df)
    const r = stat.map((t) => t / Math.sqrt(t * t + kernel.df));
    effect = correlationEffect('partial-r', r, Float64Array.from(kernel.beta), n, n - 2 - kernel.df, level); // n − 2 − df = number of nuisance covariates
  } else if (labels) {
    effect = hedgesGTwoGroups(input.data, n, P, labels, level);
  } else {
    effect = hedgesGOneSample(d!, n, P, level);
  }
  if (missing) {
    // points left out: no statistic, p or effect (stat stays 0 for the clusters; reported as null)
    for (let p = 0; p < P; p++) {
      if (missing.keep[p] === 1) continue;
      for (const a of [effect.value, effect.ciLow, effect.ciHigh, effect.difference]) if (a) a[p] = NaN;
    }
  }

  let channelNeighbours: number[][] | null;
  if (input.channelNeighbours === undefined) channelNeighbours = channels.length >= 2 ? delaunayNeighbours(channels) : null;
  else channelNeighbours = input.channelNeighbours;
  const edges = pointGraphEdges(channels.length, freqsHz.length, { channelNeighbours, frequency: frequencyAdjacency });
  const threshold = twoTailedCriticalT(clusterP, kernel.df);
  const tfce = tfceParameters(options.tfce);
  const test: PermutationTest = { kernel, scheme: makeScheme(kernel.scheme, n, permutations, seed, labels), edges, threshold, clusterMeasure, tfce };

  const observedClusters = clusterMeasure === 'none' ? [] : findClusters(stat, threshold, new ClusterWork(P, edges));
  let tfceScore: Float64Array | null = null;
  if (tfce) {
    tfceScore = new Float64Array(P);
    tfceScores(stat, tfce, new TfceWork(P, edges), tfceScore);
  }
  return { input, statistic, test, nSubjects: n, stat, df, effect, observedClusters, tfceScore, clusterP, frequencyAdjacency, channelNeighbours, missing };
}

/** Observed maps plus the null maxima of all permutations [0, count) → the result. */
export function finishPermutationTest(prepared: PreparedPermutationTest, nulls: NullMaxima): PermutationTestResult {
  const { input, test, stat, df, effect } = prepared;
  const { scheme } = test;
  if (nulls.from !== 0 || nulls.to !== scheme.count) throw new RangeError(`null maxima cover [${nulls.from}, ${nulls.to}), expected [0, ${scheme.count})`);
  const F = input.freqsHz.length;
  const measure = test.clusterMeasure;
  const clusters: ClusterResult[] = prepared.observedClusters.map((c) => {
    const observed = measure === 'size' ? c.size : Math.abs(c.mass);
    const chans = new Set<number>();
    let fmin = Infinity;
    let fmax = -Infinity;
    for (const p of c.points) {
      chans.add(Math.floor(p / F));
      fmin = Math.min(fmin, input.freqsHz[p % F]);
      fmax = Math.max(fmax, input.freqsHz[p % F]);
    }
    return {
      sign: c.sign,
      mass: c.mass,
      size: c.size,
      p: permutationP(observed, nulls.cluster!, scheme.exact),
      fminHz: fmin,
      fmaxHz: fmax,
      channels: [...chans].sort((a, b) => a - b).map((i) => input.channels[i]),
      points: c.points,
    };
  });
  clusters.sort((a, b) => a.p - b.p || Math.abs(b.mass) - Math.abs(a.mass));

  const design = input.design;
  const kernelDf = test.kernel.df;
  const missing = prepared.missing;
  const perPointDf = prepared.statistic === 'welch-t' || missing !== null;
  const reported = missing ? stat.map((t, p) => (missing.keep[p] === 1 ? t : NaN)) : stat;
  const result: PermutationTestResult = {
    design: design.kind,
    statistic: prepared.statistic,
    nSubjects: prepared.nSubjects,
    nPerGroup: null,
    groupNames: design.kind === 'groups' ? (design.groupNames ?? null) : design.kind === 'paired' ? (design.conditionNames ?? null) : null,
    nuisance: design.kind === 'groups' || design.kind === 'covariate' ? (design.nuisance ?? []).map((c) => c.name) : [],
    channels: [...input.channels],
    freqsHz: [...input.freqsHz],
    stat: Array.from(reported),
    df: perPointDf ? Array.from(df) : kernelDf,
    pUncorrected: Array.from(reported, (t, p) => (Number.isNaN(t) ? NaN : twoTailedP(t, df[p]))),
    effect: effectResult(effect),
    clusterMeasure: measure,
    clusters,
    permutations: scheme.count,
    exact: scheme.exact,
    seed: scheme.seed,
    threshold: { p: prepared.clusterP, t: test.threshold, df: kernelDf },
    frequencyAdjacency: prepared.frequencyAdjacency,
    channelNeighbours: prepared.channelNeighbours,
    pValueRule: scheme.exact
      ? `exact: all ${scheme.count} relabellings enumerated, the observed one included; p = (number with null maximum ≥ observed)/${scheme.count}`
      : `random: ${scheme.count} permutations from seed ${scheme.seed}; p = (1 + number with null maximum ≥ observed)/(1 + ${scheme.count}) (Phipson & Smyth 2010)`,
  };
  if (design.kind === 'groups') {
    let n1 = 0;
    for (let s = 0; s < prepared.nSubjects; s++) n1 += design.group[s];
    result.nPerGroup = [prepared.nSubjects - n1, n1];
  }
  if (missing) {
    const leftOut: number[] = [];
    missing.keep.forEach((k, p) => k === 0 && leftOut.push(p));
    result.missing = { nPerPoint: missing.counts.map((c) => Array.from(c)), leftOut, minimum: minimumText(missing.counts.length === 2) };
  }
  if (test.tfce && prepared.tfceScore) {
    const score = prepared.tfceScore;
    result.tfce = {
      score: Array.from(score),
      pCorrected: Array.from(score, (s) => permutationP(Math.abs(s), nulls.tfce!, scheme.exact)),
      ...test.tfce,
    };
  }
  return result;
}

function effectResult(e: EffectSize): EffectResult {
  return {
    kind: e.kind,
    value: Array.from(e.value),
    ciLow: Array.from(e.ciLow),
    ciHigh: Array.from(e.ciHigh),
    level: e.level,
    difference: e.difference ? Array.from(e.difference) : null,
  };
}

/** The whole contrast on one thread. onProgress(done, total) is called as permutations finish. */
export function runPermutationTest(input: PermutationTestInput, options: PermutationTestOptions = {}, onProgress?: ProgressCallback): PermutationTestResult {
  const prepared = preparePermutationTest(input, options);
  const nulls = runPermutations(prepared.test, { from: 0, to: prepared.test.scheme.count }, onProgress);
  return finishPermutationTest(prepared, nulls);
}
