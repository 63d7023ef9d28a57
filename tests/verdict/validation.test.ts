/**
 * Validation of the band check on simulated cohorts (tests/verdict/cohorts.ts): 20 vs 20
 * subjects, 50 seeded cohorts per scenario (7 scenarios: 350 band checks), sigma band 12–16 Hz,
 * 300 permutations per test (the smallest p is 1/301 ≈ 0.0033, below the rules' α/4 = 0.0125,
 * so the permutation count does not limit the decisions). The verdict must be right in ≥ 90 % of
 * cohorts of every effect scenario and "no-evidence" in ≥ 90 % of the null cohorts; for the
 * planted peak-frequency shifts (−1 Hz, −0.5 Hz, same height) "right" means band-specific with
 * the shift named (periodic kind frequency-shift, alone or with power, and the sentence saying
 * by how many Hz the sigma peak is lower). The confusion table is printed. The planted truth is
 * the outside reference here (what the simulator put in); the numbers the verdict rests on are
 * checked against numpy/scipy on one cohort, and the per-subject peak centres against the
 * planted centres.
 */
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { bandCheck, VERDICTS, type BandCheckResult, type Verdict } from '../../src/core/verdict/index.ts';
import { runPython } from '../helpers/python.ts';
import { FIT_RANGE_HZ, FREQ_START_HZ, FREQ_STEP_HZ, SCENARIOS, plantedCentres, simulateCohort, type ScenarioName } from './cohorts.ts';

const COHORTS = 50;
const PERMUTATIONS = 300;
const SIGMA = { name: 'sigma', loHz: 12, hiHz: 16 };
const contrast = parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2', permutations: PERMUTATIONS, seed: 11 });

const EXPECTED: Record<ScenarioName, Verdict> = {
  offset: 'broadband-offset',
  exponent: 'exponent-change',
  peak: 'band-specific',
  both: 'mixed',
  null: 'no-evidence',
  'shift-1hz': 'band-specific',
  'shift-0.5hz': 'band-specific',
};

/** Whether a result is the planted truth: the expected verdict, and for a shift the shift named. */
function right(s: ScenarioName, r: BandCheckResult): boolean {
  if (r.verdict !== EXPECTED[s]) return false;
  if (!s.startsWith('shift')) return true;
  return (
    (r.periodicKind === 'frequency-shift' || r.periodicKind === 'power-and-frequency-shift') &&
    /the sigma peak is \d\.\d+ Hz lower in patient than in control/.test(r.sentence)
  );
}

describe('band check numbers against numpy/scipy', () => {
  it('band values, Welch t and Hedges g equal an independent computation', () => {
    const data = simulateCohort('both', 3);
    const r = bandCheck(contrast, SIGMA, data, { fitRangeHz: FIT_RANGE_HZ });
    const rows = data.spectra.rows;
    const power = rows.flatMap((x) => Array.from(x.power));
    const ap = data.aperiodic.flatMap((a) => [a.offset!, a.exponent!]);
    const group = data.participants.map((p) => (p.group === 'patient' ? 1 : 0));
    const py = runPython<Record<string, { t: number; g: number; d: number }>>(
      `
import scipy.stats, scipy.integrate
P = numpy.fromfile(inputs['power']).reshape(${rows.length}, -1)
A = numpy.fromfile(inputs['ap']).reshape(${rows.length}, 2)
grp = numpy.fromfile(inputs['group']).astype(int)
f = ${FREQ_START_HZ} + ${FREQ_STEP_HZ} * numpy.arange(P.shape[1])
def inband(lo, hi): return (f >= lo - 1e-9) & (f <= hi + 1e-9)
b = inband(12, 16)
vals = {
  'raw': numpy.log10(P[:, b].mean(axis=1)),
  'periodic': (numpy.log10(P[:, b]) - (A[:, :1] - A[:, 1:] * numpy.log10(f[b]))).mean(axis=1),
  'aperiodicInBand': (A[:, :1] - A[:, 1:] * numpy.log10(f[b])).mean(axis=1),
  'offset': A[:, 0], 'exponent': A[:, 1],
  'lowerFlank': numpy.log10(P[:, inband(8, 11.5)].mean(axis=1)),
  'upperFlank': numpy.log10(P[:, inband(16.5, 20)].mean(axis=1)),
  'relative': numpy.log10(scipy.integrate.trapezoid(P[:, b], dx=${FREQ_STEP_HZ}, axis=1) / scipy.integrate.trapezoid(P[:, inband(0.5, 45)], dx=${FREQ_STEP_HZ}, axis=1)),
}
vals['tilt'] = vals['upperFlank'] - vals['lowerFlank']
out = {}
for k, v in vals.items():
  x0, x1 = v[grp == 0], v[grp == 1]
  t = scipy.stats.ttest_ind(x1, x0, equal_var=False).statistic
  n0, n1 = len(x0), len(x1)
  sp = numpy.sqrt(((n0 - 1) * x0.var(ddof=1) + (n1 - 1) * x1.var(ddof=1)) / (n0 + n1 - 2))
  J = 1 - 3 / (4 * (n0 + n1) - 9)  # Hedges & Olkin 1985 small-sample correction
  out[k] = {'t': float(t), 'g': float(J * (x1.mean() - x0.mean()) / sp), 'd': float(x1.mean() - x0.mean())}
print(json.dumps(out))
`,
      { power, ap, group },
    );
    expect(r.flanks.lower).toEqual({ name: 'lower flank', loHz: 8, hiHz: 11.5 });
    expect(r.flanks.upper).toEqual({ name: 'upper flank', loHz: 16.5, hiHz: 20 });
    for (const [name, ref] of Object.entries(py)) {
      const t = r.tests[name as keyof typeof r.tests]!;
      expect(t.t, name).toBeCloseTo(ref.t, 4); // spectra are stored as float32: 4 decimals
      expect(t.effect, name).toBeCloseTo(ref.g, 4);
      expect(t.difference!, name).toBeCloseTo(ref.d, 5);
      expect(t.n).toEqual({ control: 20, patient: 20 });
    }
  });

  it('peak centre and width: the highest fitted peak in the band per subject (numpy), subjects without one left out and counted, Welch t and g (scipy)', () => {
    const data = simulateCohort('shift-1hz', 3);
    const r = bandCheck(contrast, SIGMA, data, { fitRangeHz: FIT_RANGE_HZ });
    const index = new Map(data.participants.map((p, i) => [p.subject, i]));
    const py = runPython<Record<string, { t: number; g: number; d: number; n: number[]; missing: number[]; means: number[] }>>(
      `
import scipy.stats
pk = numpy.fromfile(inputs['peaks']).reshape(-1, 4)
grp = numpy.fromfile(inputs['group']).astype(int)
centre = numpy.full(len(grp), numpy.nan); width = centre.copy(); best = numpy.full(len(grp), -numpy.inf)
for s, c, h, w in pk:
  s = int(s)
  if 12 <= c <= 16 and h > best[s]: best[s] = h; centre[s] = c; width[s] = w
out = {}
for k, v in {'peakCenter': centre, 'peakWidth': width}.items():
  x0, x1 = v[grp == 0], v[grp == 1]; x0 = x0[~numpy.isnan(x0)]; x1 = x1[~numpy.isnan(x1)]
  n0, n1 = len(x0), len(x1)
  sp = numpy.sqrt(((n0 - 1) * x0.var(ddof=1) + (n1 - 1) * x1.var(ddof=1)) / (n0 + n1 - 2))
  J = 1 - 3 / (4 * (n0 + n1) - 9)  # Hedges & Olkin 1985 small-sample correction
  out[k] = {'t': float(scipy.stats.ttest_ind(x1, x0, equal_var=False).statistic), 'g': float(J * (x1.mean() - x0.mean()) / sp), 'd': float(x1.mean() - x0.mean()),
            'n': [n0, n1], 'missing': [int((grp == 0).sum()) - n0, int((grp == 1).sum()) - n1], 'means': [float(x0.mean()), float(x1.mean())]}
print(json.dumps(out))
`,
      {
        peaks: data.peaks.flatMap((p) => [index.get(p.subject)!, p.centerHz, p.height, p.bandwidthHz]),
        group: data.participants.map((p) => (p.group === 'patient' ? 1 : 0)),
      },
    );
    for (const name of ['peakCenter', 'peakWidth'] as const) {
      const t = r.tests[name]!;
      expect(t.t, name).toBeCloseTo(py[name].t, 9);
      expect(t.effect, name).toBeCloseTo(py[name].g, 9);
      expect(t.difference!, name).toBeCloseTo(py[name].d, 9);
      expect(t.n).toEqual({ control: py[name].n[0], patient: py[name].n[1] });
    }
    const c = py.peakCenter;
    expect(c.missing[1]).toBeGreaterThan(0); // some patients' slowed peak was fitted below 12 Hz: the left-out path is exercised
    expect(r.peakCenter.withoutPeak).toEqual({ control: c.missing[0], patient: c.missing[1] });
    expect(r.peakCenter.withPeak).toEqual({ control: c.n[0], patient: c.n[1] });
    expect(r.peakCenter.means.map((m) => [m.name, m.n])).toEqual([
      ['control', c.n[0]],
      ['patient', c.n[1]],
    ]);
    expect(r.peakCenter.means[0].centerHz).toBeCloseTo(c.means[0], 9);
    expect(r.peakCenter.means[1].widthHz).toBeCloseTo(py.peakWidth.means[1], 9);
    expect(r.figure.peakCenters).toEqual(r.peakCenter.means);
    // the sentence names the shift with the difference of the group means, one decimal
    expect(r.sentence).toContain(
      `the sigma peak is ${Math.abs(c.d).toFixed(1)} Hz lower in patient than in control (centre of the highest fitted peak in the band, mean ${c.means[0].toFixed(2)} Hz in control, ${c.means[1].toFixed(2)} Hz in patient`,
    );
    expect(r.sentence).toContain(`left out without a peak in the band: control ${c.missing[0]}, patient ${c.missing[1]}`);
    expect(r.family.map((f) => [f.test, f.threshold])).toEqual([
      ['periodic', 0.0125],
      ['peakCenter', 0.0125],
      ['offset', 0.0125],
      ['exponent', 0.0125],
    ]);
  });
});

describe('peak centres against the planted centres (20 cohorts of 40 subjects per scenario)', () => {
  // Tolerances (the fit's own resolution, measured on these seeds: see the README): the fitted
  // centre of the fast spindle is within 0.5 Hz of the planted centre for ≥ 90 % of subjects with
  // a peak in the band, median error ≤ 0.1 Hz; the misses are subjects whose slow (≈ 11 Hz) and
  // fast spindles merge into one broad fitted peak between them. The group difference the test
  // rests on is within 0.35 Hz of the planted difference in every cohort and within 0.15 Hz on
  // average over the cohorts.
  it.each(['null', 'shift-0.5hz', 'shift-1hz'] as const)(
    '%s',
    (scenario) => {
      const errors: number[] = [];
      const differenceErrors: number[] = [];
      for (let k = 0; k < 20; k++) {
        const data = simulateCohort(scenario, k);
        const r = bandCheck({ ...contrast, permutations: 1 }, SIGMA, data, { fitRangeHz: FIT_RANGE_HZ });
        const planted = plantedCentres(scenario, k);
        // each subject's highest fitted peak in 12–16 Hz (the selection checked against numpy above)
        const best = new Map<string, { centerHz: number; height: number }>();
        for (const p of data.peaks) if (p.centerHz >= 12 && p.centerHz <= 16 && p.height > (best.get(p.subject)?.height ?? -Infinity)) best.set(p.subject, p);
        for (const [subject, p] of best) errors.push(Math.abs(p.centerHz - planted.get(subject)!));
        const mean = (g: string) => {
          const xs = [...planted].filter(([s]) => s.startsWith(g)).map(([, c]) => c);
          return xs.reduce((a, b) => a + b, 0) / xs.length;
        };
        differenceErrors.push(r.tests.peakCenter!.difference! - (mean('p') - mean('c')));
      }
      errors.sort((a, b) => a - b);
      const within = errors.filter((e) => e <= 0.5).length / errors.length;
      const median = errors[Math.floor(errors.length / 2)];
      const meanDiffError = differenceErrors.reduce((a, b) => a + b, 0) / differenceErrors.length;
      console.log(
        `${scenario}: ${errors.length} subjects with a peak, ${(100 * within).toFixed(1)} % within 0.5 Hz, median error ${median.toFixed(3)} Hz; group difference error mean ${meanDiffError.toFixed(3)} Hz, largest ${Math.max(...differenceErrors.map(Math.abs)).toFixed(3)} Hz`,
      );
      expect(within).toBeGreaterThanOrEqual(0.9);
      expect(median).toBeLessThanOrEqual(0.1);
      for (const e of differenceErrors) expect(Math.abs(e)).toBeLessThanOrEqual(0.35);
      expect(Math.abs(meanDiffError)).toBeLessThanOrEqual(0.15);
    },
    120_000,
  );
});

describe('verdict on simulated cohorts (50 per scenario, 20 vs 20, 300 permutations per test)', () => {
  it('is right in at least 90 % of the cohorts of every scenario', () => {
    const columns = [...VERDICTS.filter((v) => v !== 'band-specific'), 'b-s power', 'b-s shift', 'b-s both'] as const;
    const column = (r: BandCheckResult): (typeof columns)[number] =>
      r.verdict !== 'band-specific' ? r.verdict : r.periodicKind === 'power' ? 'b-s power' : r.periodicKind === 'frequency-shift' ? 'b-s shift' : 'b-s both';
    const table = new Map<ScenarioName, { counts: Record<string, number>; right: number }>();
    for (const s of SCENARIOS) {
      const row = { counts: Object.fromEntries(columns.map((v) => [v, 0])), right: 0 };
      for (let k = 0; k < COHORTS; k++) {
        const r = bandCheck(contrast, SIGMA, simulateCohort(s, k), { fitRangeHz: FIT_RANGE_HZ });
        row.counts[column(r)]++;
        if (right(s, r)) row.right++;
      }
      table.set(s, row);
    }
    const pad = (x: string | number, w: number) => String(x).padStart(w);
    const lines = [`planted \\ verdict ${columns.map((v) => pad(v, 17)).join('')}            right`];
    for (const [s, row] of table) lines.push(`${s.padEnd(17)} ${columns.map((v) => pad(row.counts[v], 17)).join('')}${pad(row.right, 17)}`);
    console.log(`band check confusion table (${COHORTS} cohorts per row, sigma 12–16 Hz; b-s = band-specific by its periodic kind):\n${lines.join('\n')}`);
    for (const [s, row] of table) expect(row.right / COHORTS, `${s} → ${EXPECTED[s]}`).toBeGreaterThanOrEqual(0.9);
  }, 300_000);
});
