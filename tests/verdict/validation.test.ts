/**
 * Validation of the band check on simulated cohorts (tests/verdict/cohorts.ts): 20 vs 20
 * subjects, 50 seeded cohorts per scenario, sigma band 12–16 Hz, 300 permutations per test (the
 * smallest p is 1/301 ≈ 0.0033, below the rules' α/3 ≈ 0.0167, so the permutation count does
 * not limit the decisions). The verdict must be right in ≥ 90 % of cohorts of every effect
 * scenario and "no-evidence" in ≥ 90 % of the null cohorts; the confusion table is printed.
 * The planted truth is the outside reference here (what the simulator put in); the numbers the
 * verdict rests on are checked against numpy/scipy on one cohort.
 */
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { bandCheck, VERDICTS, type Verdict } from '../../src/core/verdict/index.ts';
import { runPython } from '../helpers/python.ts';
import { FIT_RANGE_HZ, FREQ_START_HZ, FREQ_STEP_HZ, SCENARIOS, simulateCohort, type ScenarioName } from './cohorts.ts';

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
};

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
});

describe('verdict on simulated cohorts (50 per scenario, 20 vs 20, 300 permutations per test)', () => {
  it('is right in at least 90 % of the cohorts of every scenario', () => {
    const table = new Map<ScenarioName, Record<Verdict, number>>();
    for (const s of SCENARIOS) {
      const counts = Object.fromEntries(VERDICTS.map((v) => [v, 0])) as Record<Verdict, number>;
      for (let k = 0; k < COHORTS; k++) counts[bandCheck(contrast, SIGMA, simulateCohort(s, k), { fitRangeHz: FIT_RANGE_HZ }).verdict]++;
      table.set(s, counts);
    }
    const pad = (x: string | number, w: number) => String(x).padStart(w);
    const lines = [`planted \\ verdict ${VERDICTS.map((v) => pad(v, 17)).join('')}`];
    for (const [s, counts] of table) lines.push(`${s.padEnd(17)} ${VERDICTS.map((v) => pad(counts[v], 17)).join('')}`);
    console.log(`band check confusion table (${COHORTS} cohorts per row, sigma 12–16 Hz):\n${lines.join('\n')}`);
    for (const [s, counts] of table) expect(counts[EXPECTED[s]] / COHORTS, `${s} → ${EXPECTED[s]}`).toBeGreaterThanOrEqual(0.9);
  }, 300_000);
});
