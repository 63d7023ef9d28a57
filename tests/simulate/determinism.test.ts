/** Same seed, same numbers; epochs in any order; stage sequences and artifacts as specified. */
import { describe, expect, it } from 'vitest';
import { NightGenerator, generateEpoch, planNight, groundTruth, ScenarioError, checkScenario } from '../../src/core/simulate/index.ts';
import { baseScenario } from './scenarios.ts';

const withEvents = baseScenario({
  nightMin: 20,
  groups: [{ name: 'control', codePrefix: 'ctl', size: 2, fsHz: 128, covariates: { ageMean: 40, ageSd: 10, femaleFraction: 0.5, scoreMean: 10, scoreSd: 3 } }],
  rhythms: [
    {
      name: 'fast-spindle',
      kind: 'bursts',
      site: 'CPz',
      widthDeg: 40,
      centerHz: 13.5,
      amplitudeUv: 15,
      durationS: [0.5, 2],
      burstFrequencySdHz: 0.3,
      perMinute: { N2: 5 },
    },
    { name: 'alpha', kind: 'narrowband', site: 'Oz', widthDeg: 40, centerHz: 10, bandwidthHz: 0.6, rmsUv: { W: 14 } },
  ],
  artifacts: [
    { kind: 'movement', subject: 'ctl01', epochFraction: 0.3, rmsUv: 150, durationS: [2, 6] },
    { kind: 'mains', subject: 'ctl02', frequencyHz: 60, amplitudeUv: 10, channels: ['Cz'] },
  ],
});

function epochs(scenario = withEvents, subject = 0, order?: number[]): Float32Array[][] {
  const plan = planNight(scenario, subject);
  const gen = new NightGenerator(plan);
  const idx = order ?? plan.stages.map((_, i) => i);
  const result: Float32Array[][] = [];
  for (const e of idx) {
    const out = plan.channels.map(() => new Float32Array(plan.epochSamples));
    gen.generate(e, out);
    result[e] = out;
  }
  return result;
}

/** All samples of two nights as bytes: equal only if bit-identical. */
function bytes(night: Float32Array[][]): Buffer {
  return Buffer.concat(night.flatMap((epoch) => epoch.map((x) => Buffer.from(x.buffer, x.byteOffset, x.byteLength))));
}

describe('determinism', () => {
  it('the same seed gives bit-identical epochs, from a fresh plan and generator', () => {
    expect(bytes(epochs()).equals(bytes(epochs()))).toBe(true);
  });

  it('a different seed gives different samples and a different night', () => {
    const a = epochs();
    const b = epochs({ ...withEvents, seed: withEvents.seed + 1 });
    expect(bytes([a[3]]).equals(bytes([b[3]]))).toBe(false);
    expect(planNight(withEvents, 0).stages).not.toEqual(planNight({ ...withEvents, seed: withEvents.seed + 1 }, 0).stages);
  });

  it('epochs generated out of order (reversed, then shuffled) equal the in-order ones', () => {
    const inOrder = epochs();
    const n = inOrder.length;
    const reversed = epochs(withEvents, 0, [...Array(n).keys()].reverse());
    const shuffled = epochs(withEvents, 0, [
      7,
      2,
      30,
      3,
      0,
      39,
      1,
      15,
      14,
      16,
      ...[...Array(n).keys()].filter((i) => ![7, 2, 30, 3, 0, 39, 1, 15, 14, 16].includes(i)),
    ]);
    expect(bytes(reversed).equals(bytes(inOrder))).toBe(true);
    expect(bytes(shuffled).equals(bytes(inOrder))).toBe(true);
  });

  it('generateEpoch on its own gives the same epoch as the streaming generator', () => {
    const plan = planNight(withEvents, 0);
    const alone = plan.channels.map(() => new Float32Array(plan.epochSamples));
    generateEpoch(plan, 17, alone);
    expect(bytes([alone]).equals(bytes([epochs()[17]]))).toBe(true);
  });

  it('subjects differ from each other', () => {
    expect(bytes([epochs(withEvents, 0)[5]]).equals(bytes([epochs(withEvents, 1)[5]]))).toBe(false);
  });

  it('the signal is continuous across epoch boundaries (the cross-fade), not stepping', () => {
    const night = epochs();
    // mean |Δx| across the 39 boundaries against the mean |Δx| inside epochs, channel Cz
    const c = 5;
    let inside = 0;
    let nInside = 0;
    let across = 0;
    for (let e = 0; e < night.length; e++) {
      const x = night[e][c];
      for (let i = 1; i < x.length; i++) {
        inside += Math.abs(x[i] - x[i - 1]);
        nInside++;
      }
      if (e > 0) across += Math.abs(x[0] - night[e - 1][c][x.length - 1]);
    }
    expect(across / (night.length - 1)).toBeLessThan(3 * (inside / nInside));
  });
});

describe('stage sequence', () => {
  const demoLike = baseScenario({
    nightMin: 60,
    hypnogram: {
      wakeAtStartMin: 6,
      cycleMin: { N1: 2, N2: 10, N3: 9, N2late: 4, R: 5 },
      n3PerCycle: 0.6,
      rPerCycle: 1.4,
      jitter: 0.25,
      awakeningsPerHour: 1.5,
    },
    groups: [
      { name: 'control', codePrefix: 'ctl', size: 12, fsHz: 256, covariates: { ageMean: 40, ageSd: 10, femaleFraction: 0.5, scoreMean: 10, scoreSd: 3 } },
    ],
  });

  it('starts awake, then N1 → N2 → N3 in the first cycle, has every stage and 120 epochs', () => {
    for (let s = 0; s < 12; s++) {
      const st = planNight(demoLike, s).stages;
      expect(st).toHaveLength(120);
      expect(st[0]).toBe('W');
      const firstSleep = st.findIndex((x) => x !== 'W');
      expect(st[firstSleep]).toBe('N1');
      expect(st.indexOf('N2')).toBeLessThan(st.indexOf('N3'));
      expect(st.indexOf('N3')).toBeLessThan(st.indexOf('R'));
      for (const stage of ['W', 'N1', 'N2', 'N3', 'R']) expect(st).toContain(stage);
    }
  });

  it('is deterministic per subject and differs between subjects (jitter)', () => {
    expect(planNight(demoLike, 3).stages).toEqual(planNight(demoLike, 3).stages);
    const distinct = new Set(Array.from({ length: 12 }, (_, s) => planNight(demoLike, s).stages.join(',')));
    expect(distinct.size).toBeGreaterThan(8);
  });
});

describe('artifacts and truth', () => {
  it('movement epochs hold bursts of the planted size and are listed in the truth', () => {
    const plan = planNight(withEvents, 0);
    const listed = plan.truth.artifacts.find((a) => a.kind === 'movement');
    expect(listed && listed.kind === 'movement').toBe(true);
    const moved = (listed as { epochs: number[] }).epochs;
    // fraction 0.3 of 40 epochs: binomial, 99.9 % between 4 and 21 (binomial quantiles, n = 40, p = 0.3)
    expect(moved.length).toBeGreaterThanOrEqual(4);
    expect(moved.length).toBeLessThanOrEqual(21);
    const night = epochs();
    const peak = (e: number): number => Math.max(...night[e].map((x) => Math.max(...x.map(Math.abs))));
    const still = plan.stages.map((_, i) => i).filter((e) => !moved.includes(e));
    const median = (v: number[]): number => v.sort((a, b) => a - b)[Math.floor(v.length / 2)];
    expect(median(moved.map(peak))).toBeGreaterThan(3 * median(still.map(peak)));
  });

  it('mains hum is on the listed channel only, at the stated amplitude', () => {
    const plan = planNight(withEvents, 1);
    const night = epochs(withEvents, 1);
    const cz = plan.channels.indexOf('Cz');
    // amplitude of the 60 Hz component over one epoch by correlation with sin and cos
    const amp = (x: Float32Array): number => {
      let s = 0;
      let c = 0;
      for (let i = 0; i < x.length; i++) {
        const w = (2 * Math.PI * 60 * i) / plan.fsHz;
        s += x[i] * Math.sin(w);
        c += x[i] * Math.cos(w);
      }
      return (2 * Math.hypot(s, c)) / x.length;
    };
    expect(Math.abs(amp(night[4][cz]) - 10)).toBeLessThan(1);
    expect(amp(night[4][cz - 1])).toBeLessThan(1);
    expect(plan.truth.artifacts).toEqual([{ kind: 'mains', frequencyHz: 60, amplitudeUv: 10, channels: ['Cz'] }]);
  });

  it('groundTruth lists every subject with per-stage, per-channel aperiodic values', () => {
    const t = groundTruth(withEvents);
    expect(t.subjects.map((s) => s.subject)).toEqual(['ctl01', 'ctl02']);
    expect(Object.keys(t.subjects[0].aperiodic.N2)).toEqual(withEvents.channels);
    expect(JSON.parse(JSON.stringify(t))).toEqual(t);
  });

  it('bad scenarios fail with the field named', () => {
    expect(() => checkScenario({ ...withEvents, channels: ['C3', 'Xy9'] })).toThrow(/channels\[1\].*Xy9/);
    expect(() => checkScenario({ ...withEvents, reference: { label: 'REF', site: 'Cz' } })).toThrow(ScenarioError);
    expect(() => checkScenario({ ...withEvents, artifacts: [{ kind: 'flat', subject: 'ctl09', channel: 'O2', valueUv: 0, noiseSdUv: 0 }] })).toThrow(
      /artifacts\[0\]\.subject/,
    );
    expect(() => checkScenario({ ...withEvents, nightMin: 10.25 })).toThrow(/nightMin/);
    expect(() =>
      checkScenario({
        ...withEvents,
        artifacts: [{ kind: 'mains', subject: 'ctl01', frequencyHz: 60, amplitudeUv: 1, channels: 'all' }],
        groups: [{ ...withEvents.groups[0], fsHz: 100 }],
      }),
    ).toThrow(/Nyquist/);
  });
});
