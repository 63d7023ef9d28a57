// Hash routes of the dashboard. Query strings follow the WHATWG URL Standard's
// application/x-www-form-urlencoded rules (URLSearchParams), so links stay valid URLs.
import { describe, expect, it } from 'vitest';
import { DEFAULT_VIEW, VIEWS, formatHash, parseHash } from '../../src/dashboard/routes.ts';

describe('hash routes', () => {
  it('parses view and parameters', () => {
    expect(parseHash('#/contrast?stage=N2&fminHz=1')).toEqual({ view: 'contrast', params: { stage: 'N2', fminHz: '1' } });
    expect(parseHash('#/quality')).toEqual({ view: 'quality', params: {} });
  });

  it('falls back to the default view for empty or unknown views', () => {
    for (const h of ['', '#', '#/', '#/nope?x=1', '#/../cohort']) expect(parseHash(h).view).toBe(DEFAULT_VIEW);
    expect(parseHash('#/nope?x=1').params).toEqual({ x: '1' });
  });

  it('round-trips values that need encoding, with keys sorted', () => {
    const route = { view: 'contrast', params: { groups: 'control,patient', label: 'a b&c=d', channels: 'C3 C4' } };
    const hash = formatHash(route);
    expect(hash).toBe('#/contrast?channels=C3+C4&groups=control%2Cpatient&label=a+b%26c%3Dd');
    expect(parseHash(hash)).toEqual(route);
    expect(formatHash({ view: 'cohort', params: {} })).toBe('#/cohort');
  });

  it('every view has a unique id, a label and a summary', () => {
    expect(new Set(VIEWS.map((v) => v.id)).size).toBe(VIEWS.length);
    for (const v of VIEWS) {
      expect(v.label.length).toBeGreaterThan(0);
      expect(v.summary.length).toBeGreaterThan(10);
    }
    // the seven views of issues 6 and 7, the two of issue 19 and the workflow of issue 18, all built
    expect(VIEWS.filter((v) => v.ready).map((v) => v.id)).toEqual([
      'cohort',
      'quality',
      'spectra',
      'contrast',
      'band-check',
      'robustness',
      'workflow',
      'power',
      'deviation',
      'report',
    ]);
  });
});
