// Exclusions that travel with the contrast JSON (`"exclusions": [{subject, channel?, stage?, reason}]`),
// a channel exclusion as missing data for that channel only, and stage-specific exclusions.
// Reference: scipy.stats.ttest_ind / ttest_rel with nan_policy='omit' (each point uses the
// subjects with a value there, as src/core/stats/missing.ts documents).
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { assembleContrast } from '../../src/core/contrast/assemble.ts';
import { compare } from '../../src/core/contrast/run.ts';
import type { ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';
import { methodsReport } from '../../src/core/report/index.ts';

const CHANNELS = ['F3', 'C3', 'C4'];
const STEP = 1;
const NBINS = 21; // 0 … 20 Hz

/** 1/f spectra with noise, N2 and N3, 6 subjects per group ("a", "b"). */
function cohort(): ContrastData {
  const rng = new Random(21);
  const rows: SpectrumRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < 12; s++) {
    const subject = `s${String(s).padStart(2, '0')}`;
    participants.push({ subject, group: s < 6 ? 'a' : 'b', age: 30 + s });
    for (const stage of ['N2', 'N3'] as const) {
      for (const channel of CHANNELS) {
        const power = new Float32Array(NBINS);
        for (let k = 0; k < NBINS; k++) power[k] = ((stage === 'N3' ? 150 : 100) / Math.max(k, 0.5)) * Math.exp(0.2 * rng.normal());
        rows.push({ subject, session: null, channel, stage, nEpochs: 60, flagged: false, flagReason: null, power });
      }
    }
  }
  return { spectra: { freqStartHz: 0, freqStepHz: STEP, nBins: NBINS, rows }, aperiodic: [], peaks: [], participants, exclusions: [] };
}

describe('the contrast JSON carries its exclusions', () => {
  it('validates them: subject and reason required, channel and stage optional, nothing else', () => {
    const c = parseContrast({
      design: 'groups',
      groups: ['a', 'b'],
      exclusions: [
        { subject: 's01', reason: 'movement' },
        { subject: 's02', channel: 'C3', stage: 'N2', reason: 'loose electrode' },
      ],
    });
    expect(c.exclusions).toEqual([
      { subject: 's01', reason: 'movement' },
      { subject: 's02', channel: 'C3', stage: 'N2', reason: 'loose electrode' },
    ]);
    expect(parseContrast({ design: 'groups', groups: ['a', 'b'] }).exclusions).toEqual([]);
    expect(() => parseContrast({ design: 'groups', groups: ['a', 'b'], exclusions: [{ subject: 's01' }] })).toThrow(/exclusions\.0\.reason/);
    expect(() => parseContrast({ design: 'groups', groups: ['a', 'b'], exclusions: [{ subject: 's01', stage: 'N4', reason: 'x' }] })).toThrow(
      /exclusions\.0\.stage/,
    );
    expect(() => parseContrast({ design: 'groups', groups: ['a', 'b'], exclusions: [{ subject: 's01', reason: 'x', note: 'y' }] })).toThrow(/exclusions\.0/);
  });

  it('applies a whole-subject exclusion of the contrast JSON like one given beside it', () => {
    const data = cohort();
    const inJson = assembleContrast(
      parseContrast({ design: 'groups', groups: ['a', 'b'], fmaxHz: 20, exclusions: [{ subject: 's01', reason: 'movement' }] }),
      data,
    );
    expect(inJson.nPerGroup).toEqual({ a: 5, b: 6 });
    expect(inJson.excluded).toEqual([{ subject: 's01', channel: null, reason: 'excluded: movement' }]);
    const beside = assembleContrast(parseContrast({ design: 'groups', groups: ['a', 'b'], fmaxHz: 20 }), {
      ...data,
      exclusions: [{ subject: 's01', channel: null, reason: 'movement' }],
    });
    expect(Array.from(beside.input.data)).toEqual(Array.from(inJson.input.data));
  });
});

describe('a channel exclusion is missing data for that channel only', () => {
  it('keeps the subject: its other channels count, the excluded channel rests on one subject fewer (scipy nan_policy="omit")', () => {
    const data = cohort();
    const c = parseContrast({
      design: 'groups',
      groups: ['a', 'b'],
      fminHz: 2,
      fmaxHz: 10,
      permutations: 100,
      statistic: 'student-t',
      exclusions: [{ subject: 's01', channel: 'C3', reason: 'loose electrode' }],
    });
    const r = compare(c, data);
    expect(r.n).toEqual({ a: 6, b: 6 });
    expect(r.subjects.map((s) => s.subject)).toContain('s01');
    expect(r.exclusions).toEqual([
      { subject: 's01', channel: 'C3', reason: 'excluded: loose electrode (that channel is missing; the subject stays)', subjectStays: true },
    ]);
    const full = assembleContrast(parseContrast({ design: 'groups', groups: ['a', 'b'], fminHz: 2, fmaxHz: 10 }), data);
    const F = full.input.freqsHz.length;
    const ref = runPython<number[]>(
      `from scipy.stats import ttest_ind\nx = numpy.fromfile(inputs['x']).reshape(12, -1)\nx[1, ${F}:${2 * F}] = numpy.nan\n` +
        `t = ttest_ind(x[6:], x[:6], equal_var=True, nan_policy='omit').statistic\nprint(json.dumps(numpy.asarray(t).tolist()))`,
      { x: full.input.data },
    );
    for (let p = 0; p < ref.length; p++) expect(r.statistics.stat[p]).toBeCloseTo(ref[p], 6);
    // how many values each point rests on
    const c3 = r.valuesPerPoint!.filter((q) => q.channel === 'C3');
    const f3 = r.valuesPerPoint!.filter((q) => q.channel === 'F3');
    expect(c3.every((q) => q.n.a === 5 && q.n.b === 6)).toBe(true);
    expect(f3.every((q) => q.n.a === 6 && q.n.b === 6)).toBe(true);
    // the methods text says so: nobody left out, the channel missing
    const text = methodsReport(r, null, null).markdown;
    expect(text).toContain('No subject was left out (analysed: a 6, b 6).');
    expect(text).toContain(
      "treated as missing data, the subject kept for its other channels (each point's statistic uses the subjects with a value there):\n\n- s01 (C3): excluded: loose electrode",
    );
  });

  it('in a paired design, a stage-specific channel exclusion leaves that channel missing (scipy ttest_rel nan_policy="omit")', () => {
    const data = cohort();
    const c = parseContrast({
      design: 'paired',
      stages: ['N2', 'N3'],
      fminHz: 2,
      fmaxHz: 6,
      permutations: 100,
      exclusions: [{ subject: 's04', channel: 'C4', stage: 'N3', reason: 'electrode off in N3' }],
    });
    const r = compare(c, data);
    expect(r.n).toEqual({ pairs: 12 });
    const first = assembleContrast(parseContrast({ design: 'paired', stages: ['N2', 'N3'], fminHz: 2, fmaxHz: 6 }), data);
    const F = first.input.freqsHz.length;
    const second = first.input.design.kind === 'paired' ? first.input.design.second : new Float64Array();
    const ref = runPython<number[]>(
      `from scipy.stats import ttest_rel\nx = numpy.fromfile(inputs['x']).reshape(12, -1)\ny = numpy.fromfile(inputs['y']).reshape(12, -1)\ny[4, ${2 * F}:${3 * F}] = numpy.nan\n` +
        `t = ttest_rel(y, x, nan_policy='omit').statistic\nprint(json.dumps(numpy.asarray(t).tolist()))`,
      { x: first.input.data, y: second },
    );
    for (let p = 0; p < ref.length; p++) expect(r.statistics.stat[p]).toBeCloseTo(ref[p], 6);
  });

  it('a design that needs every channel (covariate) leaves the subject out, saying why', () => {
    const c = parseContrast({ design: 'covariate', covariate: 'age', fmaxHz: 20, exclusions: [{ subject: 's03', channel: 'F3', reason: 'hum' }] });
    const a = assembleContrast(c, cohort());
    expect(a.nPerGroup).toEqual({ subjects: 11 });
    expect(a.excluded).toEqual([
      { subject: 's03', channel: 'F3', reason: 'excluded: hum (a covariate design needs a value at every channel, so the subject is left out)' },
    ]);
  });

  it('a channel average is the mean over the channels left', () => {
    const data = cohort();
    const c = parseContrast({
      design: 'groups',
      groups: ['a', 'b'],
      channels: ['F3', 'C3'],
      channelAverage: true,
      fminHz: 4,
      fmaxHz: 5,
      exclusions: [{ subject: 's00', channel: 'C3', reason: 'x' }],
    });
    const a = assembleContrast(c, data);
    const f3 = data.spectra.rows.find((r) => r.subject === 's00' && r.channel === 'F3' && r.stage === 'N2')!.power[4];
    expect(a.input.data[0]).toBeCloseTo(Math.log10(f3), 12);
  });
});

describe('stage-specific exclusions', () => {
  it('apply only to the stage they name', () => {
    const data = cohort();
    const n2 = (stage: 'N2' | 'N3') =>
      assembleContrast(
        parseContrast({ design: 'groups', groups: ['a', 'b'], stage: 'N2', fmaxHz: 20, exclusions: [{ subject: 's07', stage, reason: 'arousals' }] }),
        data,
      ).nPerGroup;
    expect(n2('N3')).toEqual({ a: 6, b: 6 });
    expect(n2('N2')).toEqual({ a: 6, b: 5 });
    // a paired N2–N3 contrast loses the pair when either stage is excluded
    const paired = assembleContrast(
      parseContrast({ design: 'paired', stages: ['N2', 'N3'], fmaxHz: 20, exclusions: [{ subject: 's07', stage: 'N3', reason: 'arousals' }] }),
      data,
    );
    expect(paired.nPerGroup).toEqual({ pairs: 11 });
    expect(paired.excluded).toEqual([{ subject: 's07', channel: null, stage: 'N3', reason: 'excluded: arousals' }]);
  });
});
