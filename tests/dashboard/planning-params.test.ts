// The power and deviation views' settings in the address bar: a link written from a result reads
// back to the same settings, defaults fill what the address omits, and a bad value is named.
import { describe, expect, it } from 'vitest';
import { paramsFromPower, powerFromParams } from '../../src/dashboard/views/power/power-params.ts';
import { deviationFromParams, deviationLink, paramsFromDeviation } from '../../src/dashboard/views/deviation/deviation-params.ts';
import { parseHash } from '../../src/dashboard/routes.ts';

const base = { design: 'groups', groupColumn: 'group', groups: 'control,patient', stage: 'N2' };

describe('power settings', () => {
  it('defaults: the first group drawn from, effect 0.1, n 10, 20, 30, 50 simulations, the sigma band, the contrast seed', () => {
    const { contrast, plan } = powerFromParams({ ...base, band: 'sigma:12-16', seed: '7' });
    expect(plan).toEqual({
      referenceGroup: 'control',
      effect: 0.1,
      band: { name: 'sigma', loHz: 12, hiHz: 16 },
      channels: 'all',
      nPerGroup: [10, 20, 30],
      simulations: 50,
      seed: 7,
      alpha: 0.05,
    });
    expect(contrast.measure).toBe('log-psd');
  });

  it('a written address reads back to the same settings', () => {
    const first = powerFromParams({
      ...base,
      measure: 'residual',
      band: 'spindles:11-15',
      referenceGroup: 'patient',
      effect: '-0.05',
      plantChannels: 'C3,Cz',
      n: '8,16',
      simulations: '20',
      alpha: '0.01',
    });
    const again = powerFromParams(paramsFromPower(first.contrast, first.plan));
    expect(again).toEqual(first);
  });

  it('offset and exponent take no band; bad values are named', () => {
    expect(powerFromParams({ ...base, measure: 'exponent', band: 'sigma:12-16' }).plan.band).toBeNull();
    expect(() => powerFromParams({ ...base, n: '10,x' })).toThrow('address bar: n=x is not a number');
    expect(() => powerFromParams({ ...base, n: '1' })).toThrow('invalid subjects per group (whole numbers ≥ 2): 1');
    expect(() => powerFromParams({ ...base, design: 'paired', stages: 'N2,N3' })).toThrow(
      'power simulates two groups: the contrast must be a groups design, not paired',
    );
  });
});

describe('deviation settings', () => {
  it("the reference group defaults to the form's first group; the link names the subject and asks for the result", () => {
    const { spec, subject } = deviationFromParams({ ...base, subject: 'pat04' });
    expect(spec).toMatchObject({ referenceGroup: 'control', groupColumn: 'group', stage: 'N2', measure: 'log-psd', covariates: [] });
    expect(subject).toBe('pat04');
    const route = parseHash(deviationLink('pat 04', { stage: 'N3' }));
    expect(route).toEqual({ view: 'deviation', params: { subject: 'pat 04', stage: 'N3', run: '1' } });
  });

  it('a written address reads back to the same settings', () => {
    const first = deviationFromParams({
      ...base,
      referenceGroup: 'patient',
      covariates: 'age,sex',
      measure: 'residual',
      channels: 'C3,C4',
      fminHz: '2',
      fmaxHz: '25',
      subject: 'ctl01',
    });
    expect(deviationFromParams(paramsFromDeviation(first.spec, first.subject))).toEqual(first);
    expect(() => deviationFromParams({ ...base, measure: 'peak-center' })).toThrow(/invalid deviation settings:\n {2}measure/);
  });
});
