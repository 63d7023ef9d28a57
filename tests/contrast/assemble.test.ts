import { describe, expect, it } from 'vitest';
import { parseContrast, ContrastSpecError } from '../../src/core/contrast/spec.ts';
import { assembleContrast, ContrastDataError } from '../../src/core/contrast/assemble.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { parseExclusionsTsv, exclusionsToTsv } from '../../src/core/contrast/exclusions.ts';
import type { ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

const CHANNELS = ['F3', 'C3', 'C4', 'P3'];
const STEP = 0.25;
const NBINS = 121; // 0 … 30 Hz

/** 1/f spectra with noise; group "b" has 1.5× power at 12–15 Hz over C3/C4/P3. */
function cohort(nPerGroup: number, seed: number): ContrastData {
  const rng = new Random(seed);
  const rows: SpectrumRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < 2 * nPerGroup; s++) {
    const subject = `s${String(s).padStart(2, '0')}`;
    const group = s < nPerGroup ? 'a' : 'b';
    participants.push({ subject, group, age: 20 + s });
    const level = Math.exp(0.2 * rng.normal());
    for (const channel of CHANNELS) {
      const power = new Float32Array(NBINS);
      for (let k = 0; k < NBINS; k++) {
        const f = Math.max(k * STEP, 0.25);
        const boost = group === 'b' && channel !== 'F3' && f >= 12 && f <= 15 ? 1.5 : 1;
        power[k] = ((100 * level) / f) * boost * Math.exp(0.1 * rng.normal());
      }
      rows.push({ subject, session: null, channel, stage: 'N2', nEpochs: 60, flagged: false, flagReason: null, power });
    }
  }
  return { spectra: { freqStartHz: 0, freqStepHz: STEP, nBins: NBINS, rows }, aperiodic: [], peaks: [], participants, exclusions: [] };
}

describe('contrast JSON', () => {
  it('fills the documented defaults and names every bad key', () => {
    const c = parseContrast({ design: 'groups', groups: ['control', 'patient'] });
    expect(c).toMatchObject({
      stage: 'N2',
      reference: 'recorded',
      averaging: 'mean',
      channels: 'all',
      fminHz: 1,
      fmaxHz: 30,
      measure: 'log-psd',
      correction: 'cluster-mass',
      clusterP: 0.05,
      permutations: 1000,
      seed: 1,
    });
    expect(() => parseContrast({ design: 'groups' })).toThrow(/groups: a groups design needs/);
    expect(() => parseContrast({ design: 'groups', groups: ['a', 'b'], fminHz: 20, fmaxHz: 10 })).toThrow(/fmaxHz \(10\) must exceed fminHz \(20\)/);
    expect(() => parseContrast({ design: 'groups', groups: ['a', 'b'], colour: 'red' })).toThrow(ContrastSpecError);
    expect(() => parseContrast({ design: 'groups', groups: ['a', 'b'], measure: 'band-power' })).toThrow(/needs "bands"/);
  });
});

describe('assembling a contrast', () => {
  it('lays out subjects × channels × bins of log10 PSD, equal to scipy.stats.ttest_ind on the same matrix', () => {
    const data = cohort(8, 3);
    const c = parseContrast({ design: 'groups', groups: ['a', 'b'], fminHz: 10, fmaxHz: 16, permutations: 200, statistic: 'student-t' });
    const a = assembleContrast(c, data);
    const F = a.input.freqsHz.length;
    expect(F).toBe(25); // 10 … 16 Hz in 0.25-Hz steps
    expect(a.input.channels).toEqual(CHANNELS);
    expect(a.nPerGroup).toEqual({ a: 8, b: 8 });
    // value check: subject 0, channel C3, 12 Hz equals log10 of the stored power
    const row = data.spectra.rows.find((r) => r.subject === 's00' && r.channel === 'C3')!;
    expect(a.input.data[1 * F + 8]).toBeCloseTo(Math.log10(row.power[48]), 12);
    const result = compare(c, data);
    // reference: scipy.stats.ttest_ind (equal_var=True) on the assembled matrix, group b minus a
    const ref = runPython<number[]>(
      `from scipy.stats import ttest_ind\nx = numpy.fromfile(inputs['x']).reshape(16, -1)\n` +
        `t = ttest_ind(x[8:], x[:8], equal_var=True).statistic\nprint(json.dumps(t.tolist()))`,
      { x: a.input.data },
    );
    for (let p = 0; p < ref.length; p++) expect(result.statistics.stat[p]).toBeCloseTo(ref[p], 6);
    // the planted boost (12–15 Hz over C3, C4, P3) is the strongest positive cluster
    const best = result.clusters[0];
    expect(best.sign).toBe(1);
    expect(best.p).toBeLessThan(0.05);
    expect(best.channels).toEqual(expect.arrayContaining(['C3', 'C4', 'P3']));
    expect(best.fminHz).toBeGreaterThanOrEqual(11);
    expect(best.fmaxHz).toBeLessThanOrEqual(16);
    expect(best.fmaxHz - best.fminHz).toBeGreaterThanOrEqual(2);
  });

  it('computes relative PSD with the trapezoid denominator of scipy.integrate.trapezoid', () => {
    const data = cohort(4, 5);
    const c = parseContrast({ design: 'groups', groups: ['a', 'b'], measure: 'relative', relativeRangeHz: [0.5, 30], fminHz: 5, fmaxHz: 6 });
    const a = assembleContrast(c, data);
    const row = data.spectra.rows.find((r) => r.subject === 's00' && r.channel === 'F3')!;
    // reference: scipy.integrate.trapezoid over the bins 0.5 … 30 Hz with dx = 0.25
    const total = runPython<number>(
      `from scipy.integrate import trapezoid\np = numpy.fromfile(inputs['p'])\nprint(json.dumps(float(trapezoid(p[2:121], dx=0.25))))`,
      { p: row.power },
    );
    expect(a.input.data[0]).toBeCloseTo(Math.log10(row.power[20] / total), 5);
  });

  it('leaves out excluded, flagged and incomplete subjects with their reasons', () => {
    const data = cohort(5, 7);
    data.exclusions = parseExclusionsTsv('subject\tchannel\treason\ns01\tall\tmovement all night\ns02\tC3\tloose electrode\ns03\tO1\tnot in this contrast\n');
    data.spectra.rows.find((r) => r.subject === 's06' && r.channel === 'P3')!.flagged = true;
    data.spectra.rows.find((r) => r.subject === 's06' && r.channel === 'P3')!.flagReason = 'too few clean epochs (4)';
    data.spectra.rows = data.spectra.rows.filter((r) => !(r.subject === 's07' && r.channel === 'C4'));
    const a = assembleContrast(parseContrast({ design: 'groups', groups: ['a', 'b'] }), data);
    expect(a.excluded).toEqual([
      { subject: 's01', channel: null, reason: 'excluded: movement all night' },
      { subject: 's02', channel: 'C3', reason: 'excluded: loose electrode (that channel is missing; the subject stays)', subjectStays: true },
      { subject: 's06', channel: 'P3', reason: 'N2 spectrum of P3 flagged: too few clean epochs (4)' },
      { subject: 's07', channel: 'C4', reason: 'no N2 spectrum for C4' },
    ]);
    // s02 stays: its C3 exclusion is missing data for C3 only
    expect(a.nPerGroup).toEqual({ a: 4, b: 3 });
    expect(a.input.allowMissing).toBe(true);
    // s03's exclusion names a channel outside the contrast's channels, so s03 stays
    expect(a.subjects.map((s) => s.subject)).toContain('s03');
  });

  it('averages channels into one pseudo-channel without spatial neighbours', () => {
    const data = cohort(4, 9);
    const c = parseContrast({ design: 'covariate', covariate: 'age', channels: ['C3', 'C4'], channelAverage: true, fminHz: 12, fmaxHz: 12.25 });
    const a = assembleContrast(c, data);
    expect(a.input.channels).toEqual(['mean(C3,C4)']);
    expect(a.input.channelNeighbours).toBeNull();
    const c3 = data.spectra.rows.find((r) => r.subject === 's00' && r.channel === 'C3')!.power[48];
    const c4 = data.spectra.rows.find((r) => r.subject === 's00' && r.channel === 'C4')!.power[48];
    expect(a.input.data[0]).toBeCloseTo((Math.log10(c3) + Math.log10(c4)) / 2, 12);
  });

  it('refuses unknown channels and ambiguous sessions', () => {
    const data = cohort(3, 2);
    expect(() => assembleContrast(parseContrast({ design: 'groups', groups: ['a', 'b'], channels: ['Oz'] }), data)).toThrow(ContrastDataError);
    data.spectra.rows.push({ ...data.spectra.rows[0], session: 'two' });
    expect(() => assembleContrast(parseContrast({ design: 'groups', groups: ['a', 'b'] }), data)).toThrow(/several sessions/);
  });

  it('round-trips the exclusion TSV', () => {
    const list = [
      { subject: 'x1', channel: null, reason: 'flat\tall night' },
      { subject: 'x2', channel: 'C3', reason: 'hum' },
    ];
    expect(parseExclusionsTsv(exclusionsToTsv(list))).toEqual([
      { subject: 'x1', channel: null, reason: 'flat all night' },
      { subject: 'x2', channel: 'C3', reason: 'hum' },
    ]);
  });
});
