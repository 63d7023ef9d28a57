/**
 * Samples of a planned night, one scoring epoch at a time, so a night never has to be in memory.
 *
 * Each epoch j has its own block of N = 2^m ≥ L + M samples of every stationary signal (background
 * sources, each electrode's own background, narrow-band rhythms), synthesised from the random
 * stream (seed, subject, j) with the densities of epoch j's stage (synthesis.ts). Epoch j's
 * samples are its block's first L samples, except the first M (1 s): there the continuation of
 * block j − 1 (its samples L … L+M−1) fades out while block j fades in, with weights cos θ and
 * sin θ (θ from 0 to π/2, so the variance of the sum of the two independent blocks stays the
 * same), which keeps the signal continuous across epochs. Bursts, movement and the other
 * artifacts are drawn from the epoch's own streams and stay inside it. Hence epoch j depends only
 * on (seed, subject, j − 1, j): any order gives the same numbers; in order, each block is
 * synthesised once.
 */
import { streamRandom, STREAM } from './seeds.ts';
import { addBurst } from './burst.ts';
import type { NightPlan } from './plan.ts';
import type { ScoredStage } from './scenario.ts';
import { SpectralSynthesizer, type BinAmplitudes } from './synthesis.ts';
import { backgroundDensity, rhythmDensity } from './truth.ts';

interface StageAmplitudes {
  background: BinAmplitudes;
  /** Per rhythm: bin amplitudes of narrow-band rhythms active in the stage, else null. */
  rhythms: (BinAmplitudes | null)[];
}

function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

export class NightGenerator {
  readonly plan: NightPlan;
  /** Samples of the cross-fade at the start of each epoch. */
  readonly crossfadeSamples: number;
  readonly blockLength: number;
  private readonly synth: SpectralSynthesizer;
  private readonly stageAmplitudes = new Map<ScoredStage, StageAmplitudes>();
  private readonly signals: Float64Array[];
  private readonly block: Float64Array[];
  private readonly tail: Float64Array[];
  private tailEpoch = -1;
  private readonly burst: Float64Array;
  private readonly movementEpochs: Set<number>;

  constructor(plan: NightPlan) {
    this.plan = plan;
    const L = plan.epochSamples;
    this.crossfadeSamples = Math.round(plan.fsHz);
    this.blockLength = nextPowerOfTwo(L + this.crossfadeSamples);
    this.synth = new SpectralSynthesizer(this.blockLength, plan.fsHz);
    const nSignals = plan.sources.length + plan.channels.length + 1 + plan.rhythms.length;
    this.signals = Array.from({ length: nSignals }, () => new Float64Array(this.blockLength));
    this.block = plan.channels.map(() => new Float64Array(L + this.crossfadeSamples));
    this.tail = plan.channels.map(() => new Float64Array(this.crossfadeSamples));
    this.burst = new Float64Array(L);
    this.movementEpochs = new Set(plan.artifacts.movement?.epochs ?? []);
  }

  private amplitudesFor(stage: ScoredStage): StageAmplitudes {
    let a = this.stageAmplitudes.get(stage);
    if (!a) {
      const p = this.plan;
      a = {
        background: this.synth.amplitudes((f) => backgroundDensity(p.aperiodic[stage], p.highPassHz, f)),
        rhythms: p.rhythms.map((r) => {
          if (r.kind !== 'narrowband' || r.amplitudeUv[stage] === 0) return null;
          // zero beyond ±8 SD, so only the band's bins draw random numbers
          return this.synth.amplitudes((f) => (Math.abs(f - r.centerHz) > 8 * r.bandwidthHz ? 0 : rhythmDensity(r, stage, f)));
        }),
      };
      this.stageAmplitudes.set(stage, a);
    }
    return a;
  }

  /**
   * Synthesises block j and writes the recorded mix of its samples [from, to) into dest
   * (dest[c][t − from]): Σ_s √a_s·Δg_s(c)·S_s + √q·(N_c − N_ref) + Σ_r Δg_r(c)·R_r.
   */
  private mixBlock(j: number, from: number, to: number, dest: Float64Array[]): void {
    const p = this.plan;
    const stage = p.stages[j];
    const amps = this.amplitudesFor(stage);
    const rng = streamRandom(p.scenarioSeed, STREAM.block, p.subject.index, j);
    // the signal list of this stage, synthesised two per inverse FFT in this order
    const list: { amp: BinAmplitudes; out: Float64Array }[] = [];
    let k = 0;
    for (let s = 0; s < p.sources.length + p.channels.length + 1; s++) list.push({ amp: amps.background, out: this.signals[k++] });
    const rhythmSignal: (Float64Array | null)[] = amps.rhythms.map((a) => {
      if (!a) return null;
      const out = this.signals[k++];
      list.push({ amp: a, out });
      return out;
    });
    for (let i = 0; i < list.length; i += 2) {
      const b = list[i + 1];
      this.synth.pair(list[i].amp, b ? b.amp : null, rng, list[i].out, b ? b.out : null);
    }
    const nSrc = p.sources.length;
    const nCh = p.channels.length;
    const ref = this.signals[nSrc + nCh];
    const sqrtQ = Math.sqrt(p.electrodeWeight);
    for (let c = 0; c < nCh; c++) {
      const d = dest[c];
      const own = this.signals[nSrc + c];
      // √q·(N_c − N_ref)
      for (let t = from; t < to; t++) d[t - from] = sqrtQ * (own[t] - ref[t]);
      for (let s = 0; s < nSrc; s++) {
        const g = Math.sqrt(p.sources[s].weight) * p.sources[s].gains[c];
        const x = this.signals[s];
        for (let t = from; t < to; t++) d[t - from] += g * x[t];
      }
      p.rhythms.forEach((r, i) => {
        const x = rhythmSignal[i];
        if (!x) return;
        const g = r.gains[c];
        for (let t = from; t < to; t++) d[t - from] += g * x[t];
      });
    }
  }

  /** Writes epoch `epoch` of every recorded channel (µV) into out[c] (length epochSamples each). */
  generate(epoch: number, out: Float32Array[]): void {
    const p = this.plan;
    if (!Number.isInteger(epoch) || epoch < 0 || epoch >= p.nEpochs) throw new RangeError(`epoch ${epoch} is outside 0 … ${p.nEpochs - 1}`);
    if (out.length !== p.channels.length || out.some((o) => o.length !== p.epochSamples)) {
      throw new RangeError(`out must hold ${p.channels.length} arrays of ${p.epochSamples} samples`);
    }
    const L = p.epochSamples;
    const M = this.crossfadeSamples;
    const nCh = p.channels.length;
    if (epoch > 0 && this.tailEpoch !== epoch - 1) {
      this.mixBlock(epoch - 1, L, L + M, this.tail);
      this.tailEpoch = epoch - 1;
    }
    this.mixBlock(epoch, 0, L + M, this.block);
    for (let c = 0; c < nCh; c++) {
      const b = this.block[c];
      const o = out[c];
      let t = 0;
      if (epoch > 0) {
        const tail = this.tail[c];
        for (; t < M; t++) {
          // variance-preserving cross-fade: cos θ·previous + sin θ·current, θ = (π/2)(t + ½)/M
          const theta = (Math.PI / 2) * ((t + 0.5) / M);
          o[t] = Math.cos(theta) * tail[t] + Math.sin(theta) * b[t];
        }
      }
      for (; t < L; t++) o[t] = b[t];
      this.tail[c].set(b.subarray(L, L + M));
    }
    this.tailEpoch = epoch;
    this.addBursts(epoch, out);
    this.addArtifacts(epoch, out);
  }

  private addBursts(epoch: number, out: Float32Array[]): void {
    const p = this.plan;
    const stage = p.stages[epoch];
    const rng = streamRandom(p.scenarioSeed, STREAM.events, p.subject.index, epoch);
    const L = p.epochSamples;
    for (const r of p.rhythms) {
      if (r.kind !== 'bursts' || r.perMinute[stage] === 0 || r.amplitudeUv[stage] === 0) continue;
      // Poisson count with mean perMinute·epoch/60, from exponential arrival times in [0, 1)
      const mean = (r.perMinute[stage] * p.epochS) / 60;
      let count = 0;
      for (let t = -Math.log(1 - rng.uniform()) / mean; t < 1; t += -Math.log(1 - rng.uniform()) / mean) count++;
      if (count === 0) continue;
      this.burst.fill(0);
      for (let i = 0; i < count; i++) {
        const [dMin, dMax] = r.durationS;
        const d = dMin + (dMax - dMin) * rng.uniform();
        const n = Math.round(d * p.fsHz);
        const start = Math.floor(rng.uniform() * (L - n + 1));
        const f = r.centerHz + r.bandwidthHz * rng.normal();
        const phase = 2 * Math.PI * rng.uniform();
        addBurst(this.burst, start, d, p.fsHz, r.amplitudeUv[stage], f, phase);
      }
      for (let c = 0; c < out.length; c++) {
        const g = r.gains[c];
        const o = out[c];
        for (let t = 0; t < L; t++) o[t] += g * this.burst[t];
      }
    }
  }

  private addArtifacts(epoch: number, out: Float32Array[]): void {
    const p = this.plan;
    const L = p.epochSamples;
    const fs = p.fsHz;
    const mv = p.artifacts.movement;
    if (mv && this.movementEpochs.has(epoch)) {
      const rng = streamRandom(p.scenarioSeed, STREAM.movement, p.subject.index, epoch);
      rng.uniform(); // the draw that decided this is a movement epoch (isMovementEpoch)
      const d = mv.durationS[0] + (mv.durationS[1] - mv.durationS[0]) * rng.uniform();
      const n = Math.min(L, Math.round(d * fs));
      const start = Math.floor(rng.uniform() * (L - n + 1));
      // broadband burst: white noise through a one-pole low-pass y[i] = a·y[i−1] + x[i],
      // a = exp(−2π·1 Hz/fs) (a 1/f² spectrum above 1 Hz, common practice for movement), plus
      // white noise for the high frequencies; sin² envelope; scaled to the stated RMS
      const a = Math.exp((-2 * Math.PI * 1) / fs);
      const x = this.burst;
      let y = 0;
      let sumSq = 0;
      for (let i = 0; i < n; i++) {
        y = a * y + rng.normal();
        const e = Math.sin((Math.PI * i) / n);
        x[i] = e * e * (y + 3 * rng.normal());
        sumSq += x[i] * x[i];
      }
      const scale = mv.rmsUv / Math.sqrt(sumSq / n);
      for (let c = 0; c < out.length; c++) {
        const g = scale * (0.5 + rng.uniform()) * (rng.uniform() < 0.5 ? -1 : 1);
        const o = out[c];
        for (let i = 0; i < n; i++) o[start + i] += g * x[i];
      }
    }
    for (const m of p.artifacts.mains) {
      const w = (2 * Math.PI * m.frequencyHz) / fs;
      m.channels.forEach((c, i) => {
        const o = out[c];
        const first = epoch * L;
        // A·sin(2πf·t + φ), t counted from the recording start so the phase runs on across epochs
        for (let t = 0; t < L; t++) o[t] += m.amplitudeUv * Math.sin(w * (first + t) + m.phases[i]);
      });
    }
    for (const f of p.artifacts.flat) {
      const o = out[f.channel];
      if (f.noiseSdUv === 0) o.fill(f.valueUv);
      else {
        const rng = streamRandom(p.scenarioSeed, STREAM.artifacts, p.subject.index, epoch, f.channel);
        for (let t = 0; t < L; t++) o[t] = f.valueUv + f.noiseSdUv * rng.normal();
      }
    }
  }
}

/**
 * One epoch on its own (synthesises blocks epoch − 1 and epoch). For a whole night keep one
 * NightGenerator and call generate() in order: each block is then synthesised once.
 */
export function generateEpoch(plan: NightPlan, epoch: number, out: Float32Array[]): void {
  new NightGenerator(plan).generate(epoch, out);
}
