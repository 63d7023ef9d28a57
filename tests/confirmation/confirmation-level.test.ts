// Statistical checks of the workflow on synthetic cohorts (spectral model of
// src/core/simulate/synthetic-database.ts; two channels, N2, 0–30 Hz), run through the same core
// steps as the commands: drawSplit (stratified by group) → partData on the blinded exploration part
// → a search over analysis paths → the best path locked with the coded groups → unblindContrast →
// partData on the confirmation part → compare (cluster mass, Welch t, 499 permutations).
//
// 1. Under the null (no group difference) the confirmation's family-wise error stays at the
//    nominal level although the exploration half was searched over 30 paths (5 bands × 2 band
//    measures × 3 channel choices, each a Welch t; the smallest p is locked). Size: 1000 cohorts of
//    60 subjects (30 explore, 30 confirm). Checked against the 99 % central interval of
//    Binomial(1000, 0.048) (@stdlib/stats-base-dists-binomial-quantile): 0.048 is the exact level
//    of a permutation p = (1 + b)/500 < 0.05 (b ≤ 23: 24/500; Phipson & Smyth 2010). Controls that
//    the check can fail: the best exploration path's own p, and the locked path re-run on all 60
//    subjects (reusing the explored half), both reject far more often.
// 2. With a planted broadband offset Δ (log10, second group higher), the confirmation finds it as
//    often as a two-sided t test on half the sample should: power from scipy.stats.nct with
//    δ = Δ / (σ·√(2/20)), df = 38, σ the SD of the locked measure estimated from 4000 null
//    recordings. Size: 400 cohorts of 80 subjects (20 per group confirm).
import binomialQuantile from '@stdlib/stats-base-dists-binomial-quantile';
import { describe, expect, it } from 'vitest';
import { drawSplit, stratumOf } from '../../src/core/confirmation/split.ts';
import { drawGroupCodes, unblindContrast, type Blinding } from '../../src/core/confirmation/blinding.ts';
import { partData, type PartView } from '../../src/core/confirmation/part-data.ts';
import { assembleContrast } from '../../src/core/contrast/assemble.ts';
import type { ContrastData } from '../../src/core/contrast/data.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { parseContrast, type Contrast } from '../../src/core/contrast/spec.ts';
import { twoTailedP } from '../../src/core/stats/distributions.ts';
import type { GroupsDesign } from '../../src/core/stats/index.ts';
import type { Part } from '../../src/core/confirmation/split.ts';
import { runPython } from '../helpers/python.ts';
import { CHANNELS, syntheticCohort } from './synthetic-cohort.ts';

const NO_EFFECT = { offsetLog10: 0, exponent: 0, sigmaHeightLog10: 0 };
const BANDS = ['delta', 'theta', 'alpha', 'sigma', 'beta'];
const MEASURES = ['band-power', 'relative-band-power'] as const;
/** channel choices of a path: each channel alone, or their average */
const CHANNEL_CHOICES: { channels: string[]; average: boolean }[] = [
  { channels: ['C3'], average: false },
  { channels: ['C4'], average: false },
  { channels: CHANNELS, average: true },
];
const PERMUTATIONS = 499;

const stamp = {
  id: 'sim',
  madeAt: '2000-01-01T00:00:00.000Z',
  seed: 0,
  fraction: 0.5,
  stratify: ['group'],
  blindColumn: 'group',
  subjects: { exploration: 0, confirmation: 0 },
};

/** The split of a cohort into its two views (the exploration one blinded), as the commands store it. */
function splitViews(data: ContrastData, seed: number): Record<Part, PartView> {
  const parts = drawSplit(
    data.participants.map((p) => ({ subject: String(p.subject), stratum: stratumOf(p, ['group']) })),
    { fraction: 0.5, seed, stratify: ['group'] },
  );
  const blinding: Blinding = {
    column: 'group',
    codes: drawGroupCodes(
      data.participants.map((p) => String(p.group)),
      seed,
    ),
  };
  const of = (part: Part) => new Set([...parts].filter(([, x]) => x === part).map(([s]) => s));
  return {
    exploration: { split: stamp, part: 'exploration', subjects: of('exploration'), blinding },
    confirmation: { split: stamp, part: 'confirmation', subjects: of('confirmation'), blinding: null },
  };
}

const contrastOf = (measure: (typeof MEASURES)[number], band: string, choice: (typeof CHANNEL_CHOICES)[number], groups: [string, string]): Contrast =>
  parseContrast({
    design: 'groups',
    groups,
    stage: 'N2',
    measure,
    bands: [band],
    channels: choice.channels,
    channelAverage: choice.average,
    permutations: PERMUTATIONS,
    seed: 3,
  });

/** Welch's t and its two-tailed p for one column of a subjects × points matrix (Welch 1947). */
function welchP(data: Float64Array, width: number, column: (row: Float64Array) => number, group: ArrayLike<number>): number {
  const sum = [0, 0];
  const sq = [0, 0];
  const n = [0, 0];
  for (let s = 0; s < group.length; s++) {
    const v = column(data.subarray(s * width, (s + 1) * width));
    sum[group[s]] += v;
    sq[group[s]] += v * v;
    n[group[s]]++;
  }
  const mean = [sum[0] / n[0], sum[1] / n[1]];
  const varOf = (g: number) => (sq[g] - n[g] * mean[g] * mean[g]) / (n[g] - 1);
  // t = (m1 − m0)/√(v0/n0 + v1/n1); df by Welch–Satterthwaite
  const a = varOf(0) / n[0];
  const b = varOf(1) / n[1];
  const t = (mean[1] - mean[0]) / Math.sqrt(a + b);
  const df = (a + b) ** 2 / ((a * a) / (n[0] - 1) + (b * b) / (n[1] - 1));
  return twoTailedP(t, df);
}

/** The exploration search: every path's p on the blinded exploration part; the path with the smallest p, as a coded contrast. */
function explore(data: ContrastData, view: PartView): { best: Contrast; p: number } {
  const codes = Object.values(view.blinding!.codes).sort() as [string, string];
  let best: { best: Contrast; p: number } | null = null;
  for (const measure of MEASURES) {
    // one assembly per measure: every band on every channel (subjects × channels·bands)
    const all = parseContrast({ design: 'groups', groups: codes, stage: 'N2', measure, bands: BANDS, channels: CHANNELS });
    const a = assembleContrast(all, partData(all, data, view));
    const design = a.input.design as GroupsDesign;
    const width = CHANNELS.length * BANDS.length;
    BANDS.forEach((band, j) => {
      for (const choice of CHANNEL_CHOICES) {
        const idx = choice.channels.map((ch) => CHANNELS.indexOf(ch) * BANDS.length + j);
        const p = welchP(a.input.data as Float64Array, width, (row) => idx.reduce((s, k) => s + row[k], 0) / idx.length, design.group);
        if (best === null || p < best.p) best = { best: contrastOf(measure, band, choice, codes), p };
      }
    });
  }
  return best!;
}

const smallestP = (r: { clusters: { p: number }[] }) => Math.min(1, ...r.clusters.map((k) => k.p));

describe('confirmation on the held-out part (synthetic cohorts)', () => {
  it('under the null, 1000 confirmations of a path chosen from 30 on the exploration half reject at the nominal level', () => {
    const cohorts = 1000;
    let exploreHits = 0;
    let confirmHits = 0;
    let reusedHits = 0;
    const wholeCohort: PartView = { split: stamp, part: 'exploration', subjects: new Set(), blinding: null };
    for (let k = 0; k < cohorts; k++) {
      const data = syntheticCohort(60, 1000 + k, NO_EFFECT);
      const views = splitViews(data, 7000 + k);
      const { best, p } = explore(data, views.exploration);
      if (p < 0.05) exploreHits++;
      // the plan names the coded groups; the confirmation unblinds them
      const locked = unblindContrast(best, views.exploration.blinding);
      expect(locked.groups!.sort()).toEqual(['control', 'patient']);
      if (smallestP(compare(locked, partData(locked, data, views.confirmation))) < 0.05) confirmHits++;
      // control: the same path on every subject, the explored half included
      const all = { ...wholeCohort, subjects: new Set(data.participants.map((x) => String(x.subject))) };
      if (smallestP(compare(locked, partData(locked, data, all))) < 0.05) reusedHits++;
    }
    const level = 24 / 500;
    const lo = binomialQuantile(0.005, cohorts, level);
    const hi = binomialQuantile(0.995, cohorts, level);
    console.log(
      `null, ${cohorts} cohorts: best of 30 exploration paths p < 0.05 in ${exploreHits}; confirmation p < 0.05 in ${confirmHits} (99 % interval ${lo}–${hi}); the path re-run on all subjects in ${reusedHits}`,
    );
    expect(confirmHits).toBeGreaterThanOrEqual(lo);
    expect(confirmHits).toBeLessThanOrEqual(hi);
    expect(exploreHits).toBeGreaterThan(hi);
    expect(reusedHits).toBeGreaterThan(hi);
  });

  it('with a planted offset, the confirmation has the power of a t test on half the sample (scipy.stats.nct)', () => {
    const delta = 0.16;
    const locked = parseContrast({
      design: 'groups',
      groups: ['group A', 'group B'],
      stage: 'N2',
      measure: 'band-power',
      bands: ['sigma'],
      channels: CHANNELS,
      channelAverage: true,
      permutations: PERMUTATIONS,
      seed: 3,
    });
    // σ of the locked measure, pooled within groups, from 4000 null recordings
    const big = syntheticCohort(4000, 99, NO_EFFECT);
    const a = assembleContrast({ ...locked, groups: ['control', 'patient'] }, big);
    const g = Array.from((a.input.design as GroupsDesign).group);
    const v = a.input.data;
    const mean = [0, 1].map((k) => g.reduce((s, x, i) => s + (x === k ? v[i] : 0), 0) / g.filter((x) => x === k).length);
    const ss = g.reduce((s, x, i) => s + (v[i] - mean[x]) ** 2, 0);
    const sigma = Math.sqrt(ss / (g.length - 2));
    const seRel = 1 / Math.sqrt(2 * (g.length - 2));
    // expected power of the two-sided t test, 20 per group, df 38, at σ and at σ ± 2 SE (scipy.stats.nct)
    const expected = runPython<number[]>(
      `from scipy import stats\nimport math\nout = []\nfor s in ${JSON.stringify([sigma, sigma * (1 - 2 * seRel), sigma * (1 + 2 * seRel)])}:\n    d = ${delta} / (s * math.sqrt(2 / 20))\n    c = stats.t.ppf(0.975, 38)\n    out.append(float(stats.nct.sf(c, 38, d) + stats.nct.cdf(-c, 38, d)))\nprint(json.dumps(out))`,
    );
    const cohorts = 400;
    let hits = 0;
    for (let k = 0; k < cohorts; k++) {
      const data = syntheticCohort(80, 5000 + k, { offsetLog10: delta, exponent: 0, sigmaHeightLog10: 0 });
      const views = splitViews(data, 9000 + k);
      const c = unblindContrast(locked, views.exploration.blinding);
      const r = compare(c, partData(c, data, views.confirmation));
      expect(r.n).toEqual({ [c.groups![0]]: 20, [c.groups![1]]: 20 });
      if (smallestP(r) < 0.05) hits++;
    }
    const lo = binomialQuantile(0.005, cohorts, Math.min(...expected));
    const hi = binomialQuantile(0.995, cohorts, Math.max(...expected));
    console.log(
      `planted Δ = ${delta} log10, σ = ${sigma.toFixed(4)}: confirmation power ${(hits / cohorts).toFixed(3)} over ${cohorts} cohorts; scipy.stats.nct ${expected[0].toFixed(3)} (σ ± 2 SE: ${expected[1].toFixed(3)}–${expected[2].toFixed(3)}); 99 % interval ${lo}–${hi} hits`,
    );
    expect(hits).toBeGreaterThanOrEqual(lo);
    expect(hits).toBeLessThanOrEqual(hi);
  });
});
