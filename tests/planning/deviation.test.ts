// `bandwise deviation`'s scores (src/core/planning/deviation.ts):
// - against numpy on the same matrix: every reference subject refitted without itself (explicit
//   leave-one-out least squares, numpy.linalg.lstsq), every other subject against the full fit,
//   z = (y − x₀ᵀβ)/(s·√(1 + x₀ᵀ(XᵀX)⁻¹x₀)) (Crawford & Garthwaite 2006's prediction form, from
//   memory) — an independent route to what the code gets from studentised residuals;
// - reference z centred at 0 with unit spread (iid normal values: z ~ t with m − 2 df; synthetic
//   spectra: within a stated tolerance);
// - one planted deviant subject stands out, at its planted channels and band;
// - regressing age on the reference group removes a planted age slope.
// Sizes: synthetic cohorts of 60–240 recordings × 2–6 channels (src/core/simulate's model), a few
// seconds in all.
import { describe, expect, it } from 'vitest';
import type { ContrastData } from '../../src/core/contrast/data.ts';
import { deviation, fitDeviation, parseDeviationSpec, referenceBand } from '../../src/core/planning/index.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';
import { syntheticCohort } from './synthetic-cohort.ts';

const mean = (a: number[]) => a.reduce((x, y) => x + y, 0) / a.length;
const sd = (a: number[]) => Math.sqrt(a.reduce((x, y) => x + (y - mean(a)) ** 2, 0) / (a.length - 1));
const corr = (a: number[], b: number[]) => {
  const ma = mean(a);
  const mb = mean(b);
  let sab = 0,
    saa = 0,
    sbb = 0;
  a.forEach((x, i) => {
    sab += (x - ma) * (b[i] - mb);
    saa += (x - ma) ** 2;
    sbb += (b[i] - mb) ** 2;
  });
  return sab / Math.sqrt(saa * sbb);
};

describe('deviation z against numpy', () => {
  it('equals explicit leave-one-out least squares with age and sex (1e-9)', () => {
    const { data } = syntheticCohort(60, 3, 8);
    const spec = parseDeviationSpec({ referenceGroup: 'control', covariates: ['age', 'sex'], fminHz: 4, fmaxHz: 20 });
    const model = fitDeviation(spec, data);
    const S = model.matrix.subjects.length;
    const W = model.matrix.channels.length * model.matrix.freqsHz.length;
    const byId = new Map(data.participants.map((p) => [p.subject, p]));
    // the design built here, not by the code under test: intercept, age in years, 1 for male
    const x = model.matrix.subjects.flatMap((s) => [1, byId.get(s.subject)!.age as number, byId.get(s.subject)!.sex === 'male' ? 1 : 0]);
    const expected = runPython<number[]>(
      `S, W = ${S}, ${W}
Y = numpy.fromfile(inputs['y']).reshape(S, W)
X = numpy.fromfile(inputs['x']).reshape(S, 3)
ref = numpy.fromfile(inputs['ref']).astype(bool)
Z = numpy.zeros((S, W))
def score(train, s):
    Xt, Yt = X[train], Y[train]
    beta = numpy.linalg.lstsq(Xt, Yt, rcond=None)[0]
    resid = Yt - Xt @ beta
    s2 = (resid ** 2).sum(axis=0) / (len(train) - X.shape[1])
    lev = X[s] @ numpy.linalg.inv(Xt.T @ Xt) @ X[s]
    return (Y[s] - X[s] @ beta) / numpy.sqrt(s2 * (1 + lev))
refs = numpy.flatnonzero(ref)
for s in range(S):
    train = refs[refs != s] if ref[s] else refs
    Z[s] = score(train, s)
print(json.dumps(Z.ravel().tolist()))`,
      { y: model.matrix.data, x, ref: model.isReference },
    );
    expect(model.nReference).toBe(30);
    let worst = 0;
    for (let i = 0; i < S * W; i++) worst = Math.max(worst, Math.abs(model.z[i] - expected[i]) / Math.max(1, Math.abs(expected[i])));
    console.log(`largest relative difference from numpy over ${S} × ${W} z: ${worst.toExponential(2)}`);
    expect(worst).toBeLessThan(1e-9);
  });
});

describe("reference subjects' z", () => {
  it('iid normal values: mean 0 and spread √(df/(df − 2)) of t with m − 2 df, within 0.03', () => {
    // 60 reference subjects × 400 independent points, N(2, 0.3²): leave-one-out z ~ t(58)
    const rng = new Random(17);
    const subjects = Array.from({ length: 90 }, (_, i) => `s${String(i).padStart(3, '0')}`);
    const freqStepHz = 0.25;
    const nBins = 400; // 1–100.75 Hz
    const rows = subjects.map((subject) => ({
      subject,
      session: null,
      channel: 'Cz',
      stage: 'N2' as const,
      nEpochs: 100,
      flagged: false,
      flagReason: null,
      power: Float32Array.from({ length: nBins }, () => 10 ** (2 + 0.3 * rng.normal())),
    }));
    const data: ContrastData = {
      spectra: { freqStartHz: 1, freqStepHz, nBins, rows },
      aperiodic: [],
      peaks: [],
      participants: subjects.map((subject, i) => ({ subject, group: i < 60 ? 'control' : 'patient' })),
      exclusions: [],
    };
    const r = deviation(parseDeviationSpec({ referenceGroup: 'control', fminHz: 1, fmaxHz: 100.75 }), data);
    const z = r.subjects.filter((s) => s.reference).flatMap((s) => s.z.flat() as number[]);
    const df = r.method.degreesOfFreedom.reference;
    expect(df).toBe(58);
    expect(z.length).toBe(60 * 400);
    console.log(
      `iid normal: reference z mean ${mean(z).toFixed(4)}, SD ${sd(z).toFixed(4)} (t(${df}): ${Math.sqrt(df / (df - 2)).toFixed(4)}); share beyond |z| > 2: ${r.expectedShare.toFixed(4)} (normal theory ${r.expectedShareNormal.toFixed(4)})`,
    );
    expect(Math.abs(mean(z))).toBeLessThan(0.03);
    expect(Math.abs(sd(z) - Math.sqrt(df / (df - 2)))).toBeLessThan(0.03);
    expect(Math.abs(r.expectedShare - r.expectedShareNormal)).toBeLessThan(0.01);
    // the other group is drawn alike: its share is the expected one
    const patient = r.groups.find((g) => g.group === 'patient')!;
    expect(Math.abs(patient.meanShare - r.expectedShare)).toBeLessThan(0.01);
  });

  it('synthetic spectra: mean within 0.1 of 0, SD within 0.1 of 1', () => {
    // log10 PSD of 120 reference subjects: the points of one subject share its aperiodic offset and
    // exponent, so the z of a subject move together and the pooled mean and SD vary about as a
    // sample of 120 subjects would (SE of the SD ≈ 1/√240 ≈ 0.065 at worst): hence ±0.1
    const { data } = syntheticCohort(240, 2, 12);
    const r = deviation(parseDeviationSpec({ referenceGroup: 'control' }), data);
    const z = r.subjects.filter((s) => s.reference).flatMap((s) => s.z.flat() as number[]);
    console.log(`synthetic spectra: reference z mean ${mean(z).toFixed(4)}, SD ${sd(z).toFixed(4)}, ${r.reference.n} subjects`);
    expect(r.reference.n).toBe(120);
    expect(Math.abs(mean(z))).toBeLessThan(0.1);
    expect(Math.abs(sd(z) - 1)).toBeLessThan(0.1);
  });
});

describe('a planted deviant subject', () => {
  it('stands out, at its planted channels and band', () => {
    // subject 7 (a patient): residual +0.03 log10 (PSD × 1.07) at AF7, AF3 and AFz, 10–16 Hz (75
    // of 702 points); the synthetic residual varies between subjects by about 0.004 log10, more
    // for recordings with fewer epochs (whose share beyond |z| > 2 reaches about 11 % by itself)
    const deviant = 'syn00008';
    const planted = (ch: string, f: number) => ['AF7', 'AF3', 'AFz'].includes(ch) && f >= 10 && f <= 16;
    const { data } = syntheticCohort(80, 6, 5, (s, ch, f) => (s === 7 && planted(ch, f) ? 0.03 : 0));
    const r = deviation(parseDeviationSpec({ referenceGroup: 'control', measure: 'residual' }), data);
    const ranked = [...r.subjects].sort((a, b) => b.share - a.share);
    console.log(
      `largest shares: ${ranked
        .slice(0, 3)
        .map((s) => `${s.subject} ${(100 * s.share).toFixed(1)} %`)
        .join(', ')}; expected ${(100 * r.expectedShare).toFixed(1)} %`,
    );
    expect(ranked[0].subject).toBe(deviant);
    const s = r.subjects.find((x) => x.subject === deviant)!;
    const inside: number[] = [];
    const outside: number[] = [];
    r.channels.forEach((ch, c) => r.freqsHz.forEach((f, i) => (planted(ch, f) ? inside : outside).push(s.z[c][i]!)));
    const beyond = (a: number[]) => a.filter((z) => Math.abs(z) > 2).length / a.length;
    console.log(
      `${deviant}: ${(100 * beyond(inside)).toFixed(0)} % of the planted points beyond |z| > 2 (min z ${Math.min(...inside).toFixed(1)}), ${(100 * beyond(outside)).toFixed(1)} % elsewhere`,
    );
    expect(Math.min(...inside)).toBeGreaterThan(2);
    expect(beyond(outside)).toBeLessThan(0.15);
    // the patients' share distribution: one extreme subject, a typical median
    const patients = r.groups.find((g) => g.group === 'patient')!;
    expect(patients.shares.max).toBe(s.share);
    expect(patients.shares.median).toBeLessThan(0.1);
    expect(patients.beyondReference95).toBeGreaterThanOrEqual(1);
  });
});

describe('covariate adjustment', () => {
  it('removes a planted age slope', () => {
    // +0.01 log10 per year of age above 45 at every point (besides the model's own exponent slope)
    const { data } = syntheticCohort(200, 2, 30, (_s, _ch, _f, age) => 0.01 * (age - 45));
    const others = (covariates: string[]) => {
      const r = deviation(parseDeviationSpec({ referenceGroup: 'control', covariates }), data);
      const patients = r.subjects.filter((s) => !s.reference);
      const age = new Map(data.participants.map((p) => [p.subject, p.age as number]));
      return corr(
        patients.map((s) => s.meanZ),
        patients.map((s) => age.get(s.subject)!),
      );
    };
    const before = others([]);
    const after = others(['age']);
    console.log(`correlation of the patients' mean z with age: ${before.toFixed(3)} unadjusted, ${after.toFixed(3)} adjusted for age (100 patients)`);
    // the planted slope (0.01 × an age SD of about 14 years) against the offset spread (0.15 log10): r ≈ 0.7
    expect(before).toBeGreaterThan(0.6);
    // no slope left: |r| below 0.26, 2.6 standard errors of a null correlation of 100 subjects (1/√99)
    expect(Math.abs(after)).toBeLessThan(0.26);
  });
});

describe('the reference band of one subject', () => {
  it("holds the other reference subjects' 5–95 % range, moved to the subject's covariates", () => {
    const { data } = syntheticCohort(60, 2, 3);
    const model = fitDeviation(parseDeviationSpec({ referenceGroup: 'control' }), data);
    const band = referenceBand(model, 0);
    const W = band.values.length;
    for (let q = 0; q < W; q++) expect(band.low[q]).toBeLessThanOrEqual(band.median[q]);
    // without covariates the band is the quantiles of the other reference subjects' values
    const others = model.matrix.subjects.map((_, s) => s).filter((s) => model.isReference[s] === 1 && s !== 0);
    const at = others.map((s) => model.matrix.data[s * W + 5]).sort((a, b) => a - b);
    expect(band.median[5]).toBeCloseTo((at[Math.floor((at.length - 1) / 2)] + at[Math.ceil((at.length - 1) / 2)]) / 2, 12);
  });
});
