/**
 * `bandwise power`: the power of a whole analysis — the contrast as given (measure, statistic,
 * correction, cluster-forming threshold, permutations) — estimated by simulation from the
 * cohort's own spectra. For each n per group and each of K simulations: two groups of n drawn
 * with replacement from the reference group's rows (resample.ts), the effect planted in the
 * second (planting.ts), the contrast run on them (src/core/stats), and the study judged found
 * or not (overlap.ts). Power at n = share found, with a Clopper–Pearson interval.
 *
 * Simulation k at n depends only on (seed, n, k): its draws come from the stream
 * deriveSeed(seed, 1, n, k) and its permutations from the seed deriveSeed(seed, 2, n, k), so any
 * split of the simulations over threads gives the same curve. The contrast's own seed is not used.
 * Correction 'none' needs no permutations (its p comes from the t distribution), so none are run.
 *
 * The split: preparePower (once, on every thread: the reference rows, the planted region and the
 * statistics options), runSimulation(prepared, n, k) per simulation, powerResult at the end.
 */
import type { Contrast } from '../contrast/spec.ts';
import type { ContrastData, Exclusion } from '../contrast/data.ts';
import { assembleContrast } from '../contrast/assemble.ts';
import { statsOptions, RESEARCH_NOTE } from '../contrast/run.ts';
import { delaunayNeighbours } from '../montage/adjacency.ts';
import { deriveSeed } from '../simulate/seeds.ts';
import type { Band } from '../spectrum/bands.ts';
import { finishPermutationTest, preparePermutationTest, runPermutationTest, type PermutationTestInput, type PermutationTestOptions } from '../stats/index.ts';
import { Random } from '../stats/random.ts';
import { clopperPearson } from './binomial-interval.ts';
import { judgeStudy, type Correction, type SimulationOutcome } from './overlap.ts';
import { PlanningInputError, measureTakesBand, plantedRegion, plantingRule } from './planting.ts';
import { drawStudy, type ReferenceRows } from './resample.ts';

export interface PowerPlan {
  /** the value of the contrast's group column the subjects are drawn from */
  referenceGroup: string;
  /** the planted change: log10 units, or exponent units for the exponent (planting.ts) */
  effect: number;
  /** band the effect is planted in (null for offset and exponent) */
  band: Band | null;
  /** planted channels, or all of the contrast's */
  channels: string[] | 'all';
  /** subjects per group, one power estimate each */
  nPerGroup: number[];
  /** simulations per n */
  simulations: number;
  seed: number;
  /** significance level of the analysis' p-values (default 0.05) */
  alpha: number;
}

export const POWER_INTERVAL_LEVEL = 0.95;

/** Random streams of a simulation (deriveSeed's second part). */
const STREAM = { draw: 1, permute: 2 } as const;

export interface PreparedPower {
  contrast: Contrast;
  plan: PowerPlan;
  reference: ReferenceRows;
  referenceSubjects: string[];
  excluded: Exclusion[];
  measure: string;
  channels: string[];
  freqsHz: number[];
  channelNeighbours: number[][] | null;
  options: PermutationTestOptions;
  region: Uint8Array;
  /** effect × the point's share, per point */
  shift: Float64Array;
  plantedChannels: string[];
  plantedFreqsHz: number[];
}

/**
 * Checks a plan and what it asks of the contrast before any data is read: a groups design, a
 * measure with a planting rule, a band exactly when the measure has a frequency axis, and the
 * plan's own values. Throws PlanningInputError naming the bad value.
 */
export function checkPowerPlan(c: Contrast, p: PowerPlan): void {
  const bad = (what: string, v: unknown) => {
    throw new PlanningInputError(`invalid ${what}: ${Array.isArray(v) ? v.join(',') : String(v)}`);
  };
  if (c.design !== 'groups') throw new PlanningInputError(`power simulates two groups: the contrast must be a groups design, not ${c.design}`);
  plantingRule(c.measure);
  if (measureTakesBand(c.measure) && p.band === null) throw new PlanningInputError(`measure ${c.measure} needs the band to plant the effect in (--band LO-HI)`);
  if (!measureTakesBand(c.measure) && p.band !== null) throw new PlanningInputError(`measure ${c.measure} has no frequency axis: give no band`);
  if (!p.referenceGroup) bad('reference group', p.referenceGroup);
  if (!Number.isFinite(p.effect)) bad('effect', p.effect);
  if (p.nPerGroup.length === 0 || !p.nPerGroup.every((n) => Number.isInteger(n) && n >= 2)) bad('subjects per group (whole numbers ≥ 2)', p.nPerGroup);
  if (new Set(p.nPerGroup).size !== p.nPerGroup.length) bad('subjects per group (each once)', p.nPerGroup);
  if (!(Number.isInteger(p.simulations) && p.simulations >= 1)) bad('number of simulations', p.simulations);
  if (!Number.isInteger(p.seed)) bad('seed', p.seed);
  if (!(p.alpha > 0 && p.alpha < 1)) bad('alpha', p.alpha);
}

/** The reference group's rows and everything each simulation shares. Throws PlanningInputError for a plan the contrast cannot take. */
export function preparePower(c: Contrast, plan: PowerPlan, data: ContrastData): PreparedPower {
  checkPowerPlan(c, plan);
  // the reference group alone: both "groups" of the assembly are the reference group
  const assembled = assembleContrast({ ...c, groups: [plan.referenceGroup, plan.referenceGroup] }, data);
  const N = assembled.subjects.length;
  if (N < 2)
    throw new PlanningInputError(
      `reference group ${c.groupColumn} = ${plan.referenceGroup} has ${N} subject${N === 1 ? '' : 's'} with data; at least 2 are needed`,
    );
  const input = assembled.input;
  const members = c.channels === 'all' ? [...new Set(data.spectra.rows.filter((r) => r.stage === c.stage).map((r) => r.channel))] : c.channels;
  const planted = plantedRegion(c, assembled.layout, members, input.channels, plan.band, plan.channels);
  const options = { ...statsOptions(c), frequencyAdjacency: assembled.layout.frequencyAdjacency };
  const design = input.design;
  const nuisance = design.kind === 'groups' ? (design.nuisance ?? []) : [];
  const channelNeighbours =
    input.channelNeighbours !== undefined ? input.channelNeighbours : input.channels.length >= 2 ? delaunayNeighbours(input.channels) : null;
  return {
    contrast: c,
    plan,
    reference: { data: input.data, nSubjects: N, nPoints: input.channels.length * input.freqsHz.length, nuisance },
    referenceSubjects: assembled.subjects.map((s) => s.subject),
    excluded: assembled.excluded,
    measure: assembled.layout.description,
    channels: input.channels,
    freqsHz: input.freqsHz,
    channelNeighbours,
    options,
    region: planted.region,
    shift: planted.weight.map((w) => w * plan.effect),
    plantedChannels: planted.channels,
    plantedFreqsHz: planted.freqsHz,
  };
}

/** Whether every nuisance column varies within a draw (a constant one cannot be adjusted for). */
function nuisanceVaries(columns: { values: Float64Array }[]): boolean {
  return columns.every((c) => c.values.some((v) => v !== c.values[0]));
}

/** Simulation k (0-based) at n per group: draw, plant, run the contrast, judge. */
export function runSimulation(p: PreparedPower, n: number, k: number): SimulationOutcome {
  const rng = new Random(deriveSeed(p.plan.seed, STREAM.draw, n, k));
  // a draw whose nuisance covariates do not vary is drawn again from the same stream
  let study = drawStudy(p.reference, n, p.shift, rng);
  for (let tries = 1; !nuisanceVaries(study.nuisance); tries++) {
    if (tries === 1000) throw new PlanningInputError(`1000 draws of ${n} per group left a nuisance covariate constant; use more subjects per group`);
    study = drawStudy(p.reference, n, p.shift, rng);
  }
  const input: PermutationTestInput = {
    channels: p.channels,
    freqsHz: p.freqsHz,
    data: study.data,
    design: { kind: 'groups', group: study.group, ...(study.nuisance.length > 0 ? { nuisance: study.nuisance } : {}) },
    channelNeighbours: p.channelNeighbours,
  };
  const options = { ...p.options, seed: deriveSeed(p.plan.seed, STREAM.permute, n, k) };
  const correction = p.contrast.correction as Correction;
  let result;
  if (correction === 'none') {
    // no correction: the uncorrected p needs no permutations
    const prepared = preparePermutationTest(input, options);
    result = finishPermutationTest(prepared, { from: 0, to: prepared.test.scheme.count, cluster: null, tfce: null });
  } else {
    result = runPermutationTest(input, options);
  }
  return judgeStudy(result, correction, p.region, p.plan.effect, p.plan.alpha);
}

/** The simulation a job index stands for: n level i = ⌊j / K⌋, simulation k = j mod K. */
export function simulationJob(plan: PowerPlan, job: number): { level: number; n: number; k: number } {
  const level = Math.floor(job / plan.simulations);
  return { level, n: plan.nPerGroup[level], k: job % plan.simulations };
}

export function jobCount(plan: PowerPlan): number {
  return plan.nPerGroup.length * plan.simulations;
}

export interface PowerPoint {
  nPerGroup: number;
  /** share of simulations that found the planted effect */
  power: number;
  /** Clopper–Pearson 95 % interval of the power */
  ciLow: number;
  ciHigh: number;
  simulations: number;
  /** simulations that found it */
  found: number;
  /** share of simulations with any significant finding, anywhere, either sign */
  anySignificant: number;
}

export interface PowerResult {
  kind: 'power';
  note: string;
  contrast: Contrast;
  measure: string;
  referenceGroup: string;
  referenceSubjects: string[];
  effect: number;
  effectUnit: string;
  planting: string;
  band: Band | null;
  plantedChannels: string[];
  plantedFreqsHz: number[];
  alpha: number;
  simulations: number;
  seed: number;
  method: { resampling: string; significance: string; found: string; interval: string; seeds: string };
  curve: PowerPoint[];
  excluded: Exclusion[];
  notes: string[];
}

/** The power curve from every simulation's outcome (outcomes[job], job as simulationJob counts). */
export function powerResult(p: PreparedPower, outcomes: readonly SimulationOutcome[]): PowerResult {
  const { plan, contrast: c } = p;
  if (outcomes.length !== jobCount(plan)) throw new RangeError(`${outcomes.length} outcomes for ${jobCount(plan)} simulations`);
  const K = plan.simulations;
  const curve = plan.nPerGroup.map((n, level) => {
    const part = outcomes.slice(level * K, (level + 1) * K);
    const found = part.filter((o) => o.found).length;
    const ci = clopperPearson(found, K, POWER_INTERVAL_LEVEL);
    return { nPerGroup: n, power: found / K, ciLow: ci.low, ciHigh: ci.high, simulations: K, found, anySignificant: part.filter((o) => o.any).length / K };
  });
  const N = p.reference.nSubjects;
  const notes: string[] = [];
  const beyond = plan.nPerGroup.filter((n) => n > N);
  if (beyond.length > 0)
    notes.push(
      `n per group ${beyond.join(', ')} exceeds the ${N} reference subjects: each simulated group repeats subjects, and the curve cannot hold more between-subject variety than the reference group has`,
    );
  const correctionText = {
    'cluster-mass': 'a cluster (cluster mass) with permutation p ≤ alpha',
    'cluster-size': 'a cluster (cluster size) with permutation p ≤ alpha',
    tfce: 'a point with TFCE-corrected permutation p ≤ alpha',
    none: 'a point with uncorrected p ≤ alpha (no correction for the number of points)',
  }[c.correction];
  return {
    kind: 'power',
    note: `${RESEARCH_NOTE} A power estimate plans a study; it says nothing about any individual.`,
    contrast: c,
    measure: p.measure,
    referenceGroup: plan.referenceGroup,
    referenceSubjects: p.referenceSubjects,
    effect: plan.effect,
    effectUnit: c.measure === 'exponent' ? 'exponent units' : 'log10',
    planting: plantingRule(c.measure),
    band: plan.band,
    plantedChannels: p.plantedChannels,
    plantedFreqsHz: p.plantedFreqsHz,
    alpha: plan.alpha,
    simulations: K,
    seed: plan.seed,
    method: {
      resampling: `each simulated study draws two groups of n subjects with replacement from the ${N} subjects of ${c.groupColumn} = ${plan.referenceGroup} (whole channel × frequency rows, so their covariance is kept; nuisance covariates travel with their subject) and plants the effect in the second group`,
      significance: `significant: ${correctionText}; ${c.permutations} permutations, cluster-forming p ${c.clusterP}, statistic ${c.statistic ?? 'the design default'}`,
      found:
        plan.effect === 0
          ? 'found: a significant finding of either sign that shares a point with the planted region (effect 0: the false-finding rate there)'
          : `found: a significant finding of the planted sign (${plan.effect > 0 ? 'positive' : 'negative'}, second group minus first) that shares at least one point with the planted region`,
      interval: `Clopper–Pearson exact ${Math.round(POWER_INTERVAL_LEVEL * 100)} % interval of the share found`,
      seeds: `simulation k at n draws from the seed derived from (seed ${plan.seed}, 1, n, k) and permutes with the seed derived from (seed ${plan.seed}, 2, n, k); the contrast's own seed is not used`,
    },
    curve,
    excluded: p.excluded,
    notes,
  };
}

/** Every simulation on this thread (onProgress(done, total) after each). */
export function simulatePower(c: Contrast, plan: PowerPlan, data: ContrastData, onProgress?: (done: number, total: number) => void): PowerResult {
  const p = preparePower(c, plan, data);
  const total = jobCount(plan);
  const outcomes: SimulationOutcome[] = [];
  for (let j = 0; j < total; j++) {
    const { n, k } = simulationJob(plan, j);
    outcomes.push(runSimulation(p, n, k));
    onProgress?.(j + 1, total);
  }
  return powerResult(p, outcomes);
}
