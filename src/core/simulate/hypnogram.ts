/**
 * A night's stage sequence in scoring epochs: wake at the start, then cycles
 * N1 → N2 → N3 → N2 → R with jittered lengths (N3 waning and R lengthening over the night),
 * and a few short awakenings. Deterministic from the random stream it is given.
 */
import type { Random } from '../stats/random.ts';
import type { HypnogramSpec, ScoredStage } from './scenario.ts';

/** Epochs for a mean duration in minutes, with relative jitter; at least `min`. */
function jittered(meanMin: number, epochS: number, jitter: number, rng: Random, min: number): number {
  const epochs = (meanMin * 60) / epochS;
  // lognormal factor with median 1 and log-SD ≈ jitter (common practice for positive durations)
  const n = Math.round(epochs * Math.exp(jitter * rng.normal()));
  return Math.max(min, n);
}

export function generateStages(spec: HypnogramSpec, nEpochs: number, epochS: number, rng: Random): ScoredStage[] {
  const stages: ScoredStage[] = [];
  const push = (stage: ScoredStage, count: number): void => {
    for (let i = 0; i < count && stages.length < nEpochs; i++) stages.push(stage);
  };
  push('W', jittered(spec.wakeAtStartMin, epochS, spec.jitter, rng, 1));
  const sleepOnset = stages.length;
  for (let cycle = 0; stages.length < nEpochs; cycle++) {
    const c = spec.cycleMin;
    const n3Factor = Math.pow(spec.n3PerCycle, cycle);
    const rFactor = Math.pow(spec.rPerCycle, cycle);
    push('N1', jittered(cycle === 0 ? c.N1 : c.N1 / 2, epochS, spec.jitter, rng, 1));
    push('N2', jittered(c.N2, epochS, spec.jitter, rng, 1));
    push('N3', jittered(c.N3 * n3Factor, epochS, spec.jitter, rng, 0));
    push('N2', jittered(c.N2late, epochS, spec.jitter, rng, 1));
    push('R', jittered(c.R * rFactor, epochS, spec.jitter, rng, 1));
  }
  // awakenings: a Poisson number of 1–2 W epochs at uniform times after sleep onset
  const sleepEpochs = nEpochs - sleepOnset;
  const expected = (spec.awakeningsPerHour * sleepEpochs * epochS) / 3600;
  let count = 0;
  for (let t = -Math.log(1 - rng.uniform()); t < expected; t += -Math.log(1 - rng.uniform())) count++;
  for (let a = 0; a < count && sleepEpochs > 2; a++) {
    const at = sleepOnset + 1 + rng.int(sleepEpochs - 1);
    const length = 1 + rng.int(2);
    for (let i = at; i < Math.min(nEpochs, at + length); i++) stages[i] = 'W';
  }
  return stages;
}
