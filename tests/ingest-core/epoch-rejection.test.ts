import { describe, expect, it } from 'vitest';
import { runPython } from '../helpers/python.ts';
import { modifiedZ, spectralOutliers, timeDomainCheck } from '../../src/core/quality/epoch-rejection.ts';
import { Random } from '../../src/core/stats/random.ts';

const fs = 100;
const rng = new Random(3);
const noise = (sd: number, n = 30 * fs) => Float32Array.from({ length: n }, () => sd * rng.normal());

describe('time-domain checks', () => {
  it('rejects peak-to-peak above 500 µV with the measured amplitude', () => {
    const x = noise(20);
    expect(timeDomainCheck(x, 0, x.length, fs).reason).toBeNull();
    x[1000] = 400;
    x[1001] = -200;
    const r = timeDomainCheck(x, 0, x.length, fs);
    expect(r.reason).toBe('amplitude');
    expect(r.value).toBeCloseTo(600, 3);
  });

  it('rejects flat signals by SD and by a run of identical samples', () => {
    const quiet = noise(0.3);
    const r = timeDomainCheck(quiet, 0, quiet.length, fs);
    expect(r.reason).toBe('flat');
    expect(r.value).toBeCloseTo(0.3, 1);
    const stuck = noise(20);
    stuck.fill(12, 500, 600); // 100 identical samples = 1 s at 100 Hz
    expect(timeDomainCheck(stuck, 0, stuck.length, fs)).toMatchObject({ reason: 'flat', value: 1 });
    stuck[550] = 0; // longest run now 50 samples = 0.5 s
    expect(timeDomainCheck(stuck, 0, stuck.length, fs).reason).toBeNull();
  });

  it('SD equals numpy.std(ddof=1) on an offset window', () => {
    const x = noise(7, 5000);
    // outside reference: numpy.std with ddof=1
    const sd = runPython<number>(`x = numpy.fromfile(inputs['x']); print(json.dumps(float(numpy.std(x[1000:4000], ddof=1))))`, { x });
    expect(timeDomainCheck(x, 1000, 3000, fs).sdUv).toBeCloseTo(sd, 4);
  });
});

describe('spectral outliers (modified z, Iglewicz & Hoaglin 1993)', () => {
  it('modified z equals |x − median| / (1.4826·MAD) as scipy.stats.median_abs_deviation computes', () => {
    const v = Float64Array.from({ length: 41 }, () => rng.normal() * 2 + 5);
    const idx = Int32Array.from({ length: 30 }, (_, i) => i + 5);
    // outside reference: scipy.stats.median_abs_deviation(scale='normal') = MAD / Φ⁻¹(3/4) = 1.4826·MAD
    const z = runPython<number[]>(
      `from scipy.stats import median_abs_deviation
v = numpy.fromfile(inputs['v'])[5:35]
print(json.dumps((numpy.abs(v - numpy.median(v)) / median_abs_deviation(v, scale='normal')).tolist()))`,
      { v },
    );
    const ours = modifiedZ(v, idx);
    // 1.4826 vs 1/Φ⁻¹(0.75) = 1.482602…: relative difference 1.5e-6
    z.forEach((zi, i) => expect(Math.abs(ours[i] - zi)).toBeLessThan(1e-5 * Math.max(1, zi)));
  });

  it('flags outliers within their own stage, muscle before broadband, and skips ineligible epochs', () => {
    const n = 60;
    const group = Int32Array.from({ length: n }, (_, e) => (e < 30 ? 2 : 3)); // N2 then N3
    const broad = Float64Array.from(group, (g) => (g === 2 ? 2 : 3) + 0.05 * rng.normal());
    const muscle = Float64Array.from(group, () => 0 + 0.05 * rng.normal());
    const eligible = new Uint8Array(n).fill(1);
    broad[10] = 3; // an N3-like level inside N2: outlier in N2 only
    muscle[40] = 1.5; // muscle burst in N3 (its broadband also up)
    broad[40] += 0.5;
    broad[45] = 9;
    eligible[45] = 0; // already rejected in the time domain: not judged, not in the median
    const out = spectralOutliers(broad, muscle, group, eligible, 3.5);
    expect(out.map((o) => [o.epoch, o.reason])).toEqual([
      [10, 'broadband-outlier'],
      [40, 'muscle-outlier'],
    ]);
    expect(out[0].value).toBeGreaterThan(3.5);
    // epochs outside any group (stage index −1) are never judged
    expect(spectralOutliers(broad, muscle, new Int32Array(n).fill(-1), eligible)).toEqual([]);
  });

  it('does not reject when the MAD collapses by chance below the sampling spread (issue 24)', () => {
    // 14 epochs: eight within ±0.003 of the median, six 0.04 away (MAD ≈ 0.003). A plain cut at
    // 3.5 rejects the six (z ≈ 9); c_14 ≈ 6.7 alone still rejects them (0.04 > 6.7·1.4826·0.003);
    // with the sampling sd σ_s = 0.0186 of log10 25–45 Hz power (white-ish noise, 30-s epochs,
    // log-power-spread.ts) nothing within 3.5·σ_s = 0.065 goes. A 0.5 jump (×3 power) still goes.
    const near = [0, 0.001, -0.001, 0.002, -0.002, 0.003, -0.003, 0.0005];
    const far = [0.04, -0.04, 0.04, -0.04, 0.04, -0.04];
    const muscle = Float64Array.from([...near, ...far], (d) => 1 + d);
    const broad = Float64Array.from(muscle, (m) => m + 1);
    const group = new Int32Array(14);
    const eligible = new Uint8Array(14).fill(1);
    const plain = modifiedZ(
      muscle,
      Int32Array.from({ length: 14 }, (_, i) => i),
    );
    expect(plain.filter((z) => z > 3.5).length).toBe(6);
    expect(spectralOutliers(broad, muscle, group, eligible, 3.5).length).toBe(6);
    const floors = { broadband: [0.0186], muscle: [0.0186] };
    expect(spectralOutliers(broad, muscle, group, eligible, 3.5, floors)).toEqual([]);
    muscle[13] = 1.5;
    expect(spectralOutliers(broad, muscle, group, eligible, 3.5, floors).map((r) => [r.epoch, r.reason])).toEqual([[13, 'muscle-outlier']]);
  });

  it('leaves groups under five epochs alone and rejects a smaller minimum', () => {
    const v = Float64Array.from([1, 1.01, 0.99, 9]);
    expect(spectralOutliers(v, v, new Int32Array(4), new Uint8Array(4).fill(1))).toEqual([]);
    expect(() => spectralOutliers(v, v, new Int32Array(4), new Uint8Array(4).fill(1), 3.5, null, 3)).toThrow(/minimum group size: 3/);
  });
});
