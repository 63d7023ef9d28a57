// Every place that shows a contrast's result states its design and direction (docs/design.md:
// differences are groups[1] minus groups[0], paired second minus first; a covariate design's
// statistic is the correlation converted to t, Pearson r → t = r·√(n−2)/√(1−r²), common practice).
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { compare, type CompareResult } from '../../src/core/contrast/run.ts';
import type { ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { Random } from '../../src/core/stats/random.ts';
import { methodsReport } from '../../src/core/report/index.ts';
import { statisticMapPlot, statisticMapTitle } from '../../src/dashboard/views/contrast/contrast-charts.ts';
import { clusterTable } from '../../src/core/contrast/cluster-table.ts';

const CHANNELS = ['C3', 'C4'];
const STEP = 0.5;
const NBINS = 41; // 0 … 20 Hz

/**
 * 12 subjects, N2 and N3 spectra; N3 has 2× power at 1–4 Hz, and N2 sigma (12–15 Hz) power rises
 * with age (0.03 log10 per year), so both a paired and a covariate contrast find a cluster.
 */
function cohort(): ContrastData {
  const rng = new Random(11);
  const rows: SpectrumRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < 12; s++) {
    const subject = `s${String(s).padStart(2, '0')}`;
    const age = 20 + 3 * s;
    participants.push({ subject, group: s % 2 ? 'patient' : 'control', age });
    for (const stage of ['N2', 'N3'] as const) {
      for (const channel of CHANNELS) {
        const power = new Float32Array(NBINS);
        for (let k = 0; k < NBINS; k++) {
          const f = Math.max(k * STEP, 0.5);
          const slow = stage === 'N3' && f >= 1 && f <= 4 ? 2 : 1;
          const sigma = stage === 'N2' && f >= 12 && f <= 15 ? 10 ** (0.03 * (age - 40)) : 1;
          power[k] = (100 / f) * slow * sigma * Math.exp(0.05 * rng.normal());
        }
        rows.push({ subject, session: null, channel, stage, nEpochs: 60, flagged: false, flagReason: null, power });
      }
    }
  }
  return { spectra: { freqStartHz: 0, freqStepHz: STEP, nBins: NBINS, rows }, aperiodic: [], peaks: [], participants, exclusions: [] };
}

const base = { fminHz: 1, fmaxHz: 18, permutations: 200, seed: 3 };
let pairedResult: CompareResult;
let covariateResult: CompareResult;
const paired = () => (pairedResult ??= compare(parseContrast({ ...base, design: 'paired', stages: ['N2', 'N3'] }), cohort()));
const covariate = () => (covariateResult ??= compare(parseContrast({ ...base, design: 'covariate', covariate: 'age' }), cohort()));

describe('labels of a paired contrast (N3 − N2)', () => {
  it('colour bar, title, cluster table and methods sentence say "N3 − N2", never a group', () => {
    const r = paired();
    expect(r.clusters[0].sign).toBe(1); // planted: N3 above N2 at 1–4 Hz
    const bar = (statisticMapPlot(r).color as { label: string }).label;
    expect(bar).toBe('paired t, N3 − N2');
    expect(statisticMapTitle(r)).toBe('Statistic over channels and frequencies: N3 − N2, paired');
    expect(clusterTable(r, { singlePoints: true }).rows[0].direction).toBe('N3 > N2');
    const text = methodsReport(r, null, null).markdown;
    expect(text).toMatch(/positive cluster \(N3 > N2\), 1–4 Hz/);
    expect(`${bar} ${statisticMapTitle(r)} ${text}`).not.toMatch(/patient|control/);
  });
});

describe('labels of a covariate contrast (age)', () => {
  it('says "correlation with age, shown as t" and a positive cluster rises with age', () => {
    const r = covariate();
    expect(r.statistics.statistic).toBe('pearson');
    const best = r.clusters[0];
    expect(best.sign).toBe(1);
    expect(best.fminHz).toBeGreaterThanOrEqual(11.5);
    expect((statisticMapPlot(r).color as { label: string }).label).toBe('correlation with age, shown as t (from Pearson r)');
    expect(statisticMapTitle(r)).toBe('Statistic over channels and frequencies: N2, correlation with age');
    expect(clusterTable(r, { singlePoints: true }).rows[0].direction).toBe('rises with age');
    expect(methodsReport(r, null, null).markdown).toMatch(/positive cluster \(rises with age\), 1[12]/);
  });
});

describe('keys a design does not use are refused, never ignored', () => {
  it.each([
    [{ design: 'paired', stages: ['N2', 'N3'], groups: ['control', 'patient'] }, /groups: "groups" is used by the groups design only/],
    [{ design: 'covariate', covariate: 'age', groups: ['control', 'patient'] }, /groups: "groups" is used by the groups design only/],
    [{ design: 'groups', groups: ['control', 'patient'], stages: ['N2', 'N3'] }, /stages: "stages" is used by the paired design only/],
    [{ design: 'groups', groups: ['control', 'patient'], covariate: 'age' }, /covariate: "covariate" is used by the covariate design only/],
  ])('%j', (json, message) => {
    expect(() => parseContrast(json)).toThrow(message);
  });
});
