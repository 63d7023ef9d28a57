import { describe, expect, it } from 'vitest';
import { runPython } from '../helpers/python.ts';
import { BandPowerTable, DEFAULT_BANDS, bandBins, bandPower, parseBand, relativePower } from '../../src/core/spectrum/bands.ts';
import { welch } from '../../src/core/spectrum/welch.ts';
import { Random } from '../../src/core/stats/random.ts';

const fs = 256;
const rng = new Random(7);
const x = Float64Array.from({ length: fs * 60 }, (_, i) => 20 * Math.sin((2 * Math.PI * 10.3 * i) / fs) + 10 * rng.normal());
const { psd, freqsHz } = welch(x, fs, { segmentS: 4 });
const step = freqsHz[1];

describe('band power', () => {
  it('integral equals scipy.integrate.trapezoid over the same bins (lo ≤ f ≤ hi)', () => {
    // outside reference: scipy.integrate.trapezoid and numpy boolean masks on the machine's python3
    const bands = [...DEFAULT_BANDS, { name: 'odd', loHz: 0.6, hiHz: 13.1 }];
    const expected = runPython<number[]>(
      `from scipy.integrate import trapezoid
p = numpy.fromfile(inputs['p']); f = numpy.fromfile(inputs['f'])
bands = ${JSON.stringify(bands.map((b) => [b.loHz, b.hiHz]))}
out = []
for lo, hi in bands:
    m = (f >= lo - 1e-9) & (f <= hi + 1e-9)
    out.append(float(trapezoid(p[m], f[m])))
print(json.dumps(out))`,
      { p: psd, f: freqsHz },
    );
    bands.forEach((b, i) => {
      expect(Math.abs(bandPower(psd, b, 0, step, 'integral') - expected[i]) / expected[i]).toBeLessThan(1e-12);
    });
  });

  it('mean density is the arithmetic mean of the bins inside the band', () => {
    const bins = bandBins({ name: 'alpha', loHz: 8, hiHz: 12 }, 0, 0.25, 181)!;
    expect(bins).toEqual({ first: 32, last: 48 }); // 8 Hz and 12 Hz both inside
    let s = 0;
    for (let k = 32; k <= 48; k++) s += psd[k];
    expect(bandPower(psd, DEFAULT_BANDS[2], 0, step, 'mean')).toBeCloseTo(s / 17, 10);
  });

  it('the integral of a sine peak is A²/2 and adjacent bands add up (physical identity, STANDARDS.md)', () => {
    const sine = Float64Array.from({ length: fs * 32 }, (_, i) => 20 * Math.sin((2 * Math.PI * 10 * i) / fs));
    const p = welch(sine, fs, { segmentS: 4 }).psd;
    expect(bandPower(p, { name: 'peak', loHz: 9, hiHz: 11 }, 0, 0.25, 'integral')).toBeCloseTo(200, 6);
    const whole = bandPower(psd, { name: 'x', loHz: 0.5, hiHz: 12 }, 0, step, 'integral');
    const parts = ['delta', 'theta', 'alpha'].reduce(
      (s, n) =>
        s +
        bandPower(
          psd,
          DEFAULT_BANDS.find((b) => b.name === n)!,
          0,
          step,
          'integral',
        ),
      0,
    );
    expect(parts).toBeCloseTo(whole, 8);
  });

  it('relative power states its denominator and the table reuses bin ranges', () => {
    const broad = DEFAULT_BANDS[5];
    const r = relativePower(psd, DEFAULT_BANDS[2], broad, 0, step, 'integral');
    expect(r).toBeCloseTo(bandPower(psd, DEFAULT_BANDS[2], 0, step, 'integral') / bandPower(psd, broad, 0, step, 'integral'), 12);
    expect(r).toBeGreaterThan(0.5); // the 10.3 Hz sine dominates
    const table = new BandPowerTable(DEFAULT_BANDS, 0, step, 181, 'mean');
    const out = new Float64Array(DEFAULT_BANDS.length);
    table.compute(psd, out);
    DEFAULT_BANDS.forEach((b, i) => expect(out[i]).toBeCloseTo(bandPower(psd, b, 0, step, 'mean'), 10));
  });

  it('fails loudly on bad bands', () => {
    expect(parseBand('sigma:11-16')).toEqual({ name: 'sigma', loHz: 11, hiHz: 16 });
    expect(() => parseBand('sigma 11-16')).toThrow(/invalid band 'sigma 11-16'/);
    expect(() => parseBand('x:8-4')).toThrow(/invalid edges 8–4 Hz/);
    expect(() => new BandPowerTable([{ name: 'gamma', loHz: 60, hiHz: 80 }], 0, 0.25, 181)).toThrow(/gamma/);
  });

  it('one grammar: LO-HI, name:LO-HI and the preset names', () => {
    // LO-HI in Hz as the command line's synopsis writes it (docs/design.md: `band-check … --band LO-HI`)
    expect(parseBand('12-16')).toEqual({ name: '12–16 Hz', loHz: 12, hiHz: 16 });
    expect(parseBand(' 0.5 - 4 ')).toEqual({ name: '0.5–4 Hz', loHz: 0.5, hiHz: 4 });
    expect(parseBand('fast spindles: 12.5-15')).toEqual({ name: 'fast spindles', loHz: 12.5, hiHz: 15 });
    // preset edges are common practice in sleep EEG (bands.ts header), not a standard
    expect(parseBand('sigma')).toEqual({ name: 'sigma', loHz: 12, hiHz: 16 });
    expect(parseBand('fast-sigma')).toEqual({ name: 'fast-sigma', loHz: 13, hiHz: 15 });
    expect(parseBand('theta')).toEqual({ name: 'theta', loHz: 4, hiHz: 8 });
    // a preset is a copy: changing it does not change the next parse
    parseBand('alpha').hiHz = 99;
    expect(parseBand('alpha').hiHz).toBe(12);
    expect(() => parseBand('gamma')).toThrow(
      /^invalid band 'gamma': expected LO-HI in Hz \(e\.g\. 12-16\), name:LO-HI, or a preset: delta, theta, alpha, sigma, beta, broadband, slow-sigma, fast-sigma$/,
    );
    expect(() => parseBand('8-4')).toThrow(/^band '8–4 Hz': invalid edges 8–4 Hz$/);
    expect(() => parseBand(' :8-12')).toThrow(/band without a name/);
    expect(() => parseBand('a:b:8-12')).toThrow(/invalid band 'a:b:8-12'/);
  });
});
