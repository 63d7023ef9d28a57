// The dashboard views' own small computations, against outside references: cohort quartiles vs
// numpy.percentile (method 'linear' = Hyndman & Fan definition 7), group mean confidence interval
// vs scipy.stats.t.interval, inverse-distance weighting vs a numpy evaluation of Shepard's (1968)
// formula; the quality grid's cell score is src/core's cellScore (highest severity, capped at 2).
// Sizes: 9 rows × 7 bins, 11 subjects × 5 points, 6 electrodes × 50 points.
import { describe, expect, it } from 'vitest';
import { Random } from '../../src/core/stats/random.ts';
import { inverseDistance, mapElectrodes, MAP_RADIUS } from '../../src/dashboard/components/scalp-map.ts';
import { spectrumQuartiles, quantileSorted } from '../../src/dashboard/views/quality/cohort-band.ts';
import { buildGrid, RECORDING_COLUMN } from '../../src/dashboard/views/quality/quality-data.ts';
import { meanWithInterval } from '../../src/dashboard/views/spectra/group-mean.ts';
import type { QualityRecord } from '../../src/queries/quality.ts';
import { runPython } from '../helpers/python.ts';

describe('cohort quartiles per bin', () => {
  it('match numpy.percentile (linear) per column', () => {
    const rng = new Random(3);
    const rows = 9;
    const bins = 7;
    const power = new Float32Array(rows * bins);
    for (let i = 0; i < power.length; i++) power[i] = Math.fround(10 * rng.uniform() + 0.1);
    const q = spectrumQuartiles(power, bins, 0.5, 0.25);
    const ref = runPython<number[][]>(
      `x = numpy.fromfile(inputs['p']).reshape(${rows}, ${bins})\nprint(json.dumps([numpy.percentile(x, k, axis=0).tolist() for k in (25, 50, 75)]))`,
      { p: power },
    );
    for (let b = 0; b < bins; b++) {
      expect(q.q25[b]).toBeCloseTo(ref[0][b], 9);
      expect(q.median[b]).toBeCloseTo(ref[1][b], 9);
      expect(q.q75[b]).toBeCloseTo(ref[2][b], 9);
      expect(q.freqsHz[b]).toBe(0.5 + 0.25 * b);
    }
  });

  it('handles one row and an empty set', () => {
    expect(quantileSorted([4], 0.25)).toBe(4);
    expect(quantileSorted([], 0.5)).toBeNaN();
    expect(quantileSorted([1, 2, 3, 4], 0.5)).toBe(2.5);
  });
});

describe('group mean with 95 % interval', () => {
  it('matches scipy.stats.t.interval with the standard error of the mean', () => {
    const rng = new Random(11);
    const n = 11;
    const P = 5;
    const rows = Array.from({ length: n }, () => Float64Array.from({ length: P }, () => rng.normal() * 2 + 1));
    const flat = rows.flatMap((r) => [...r]);
    const m = meanWithInterval(rows, P);
    const ref = runPython<[number[], number[], number[]]>(
      `import scipy.stats\nx = numpy.fromfile(inputs['x']).reshape(${n}, ${P})\nm = x.mean(0); se = scipy.stats.sem(x, axis=0)\nlo, hi = scipy.stats.t.interval(0.95, ${n - 1}, loc=m, scale=se)\nprint(json.dumps([m.tolist(), lo.tolist(), hi.tolist()]))`,
      { x: flat },
    );
    for (let j = 0; j < P; j++) {
      expect(m.mean[j]).toBeCloseTo(ref[0][j], 10);
      expect(m.low[j]).toBeCloseTo(ref[1][j], 8);
      expect(m.high[j]).toBeCloseTo(ref[2][j], 8);
    }
    const one = meanWithInterval([Float64Array.of(3)], 1);
    expect([one.mean[0], one.low[0], one.high[0]]).toEqual([3, 3, 3]);
  });
});

describe('scalp map interpolation', () => {
  const names = ['Fz', 'Cz', 'Pz', 'C3', 'C4', 'O1', 'M1'];
  const electrodes = mapElectrodes(names.map((channel, i) => ({ channel, value: i * 1.5 - 2 })));

  it('leaves off electrodes outside the drawn disk (mastoids) and keeps the rest', () => {
    expect(electrodes.map((e) => e.channel)).toEqual(['Fz', 'Cz', 'Pz', 'C3', 'C4', 'O1']);
    for (const e of electrodes) expect(Math.hypot(e.x, e.y)).toBeLessThanOrEqual(MAP_RADIUS);
    // Cz is the vertex: the centre of the disk; Fz is in front (nose +y)
    const cz = electrodes.find((e) => e.channel === 'Cz')!;
    expect(Math.hypot(cz.x, cz.y)).toBeLessThan(1e-12);
    expect(electrodes.find((e) => e.channel === 'Fz')!.y).toBeGreaterThan(0);
  });

  it('equals the values at the electrodes, 1/d² weights between them, nothing outside the head', () => {
    for (const e of electrodes) expect(inverseDistance(electrodes, e.x, e.y)).toBe(e.value);
    expect(inverseDistance(electrodes, 0.8, 0.8)).toBeNaN();
    const rng = new Random(5);
    const pts = Array.from({ length: 50 }, () => [rng.uniform() * 1.2 - 0.6, rng.uniform() * 1.2 - 0.6]);
    const ours = pts.map(([x, y]) => inverseDistance(electrodes, x, y));
    const ref = runPython<number[]>(
      `e = numpy.fromfile(inputs['e']).reshape(-1, 3); p = numpy.fromfile(inputs['p']).reshape(-1, 2)\nd2 = ((p[:, None, :] - e[None, :, :2]) ** 2).sum(-1); w = 1 / d2\nprint(json.dumps(((w * e[None, :, 2]).sum(1) / w.sum(1)).tolist()))`,
      { e: electrodes.flatMap((e) => [e.x, e.y, e.value]), p: pts.flat() },
    );
    ours.forEach((v, i) => expect(v).toBeCloseTo(ref[i], 10));
  });
});

describe('quality grid', () => {
  const row = (recordingId: string, channel: string | null, stage: string | null, metric: string, severity: number, reason: string | null): QualityRecord => ({
    recordingId,
    subject: `s-${recordingId}`,
    channel,
    stage,
    metric,
    value: severity * 2,
    flagged: severity >= 1,
    reason,
    severity,
    reference: null,
  });

  it('scores each subject × channel by its worst row, keeps the metrics apart, adds a recording column', () => {
    const rows = [
      row('a', 'C3', 'N2', 'mains-hum', 4.5, 'hum'),
      row('a', 'C3', 'N3', 'rejected-fraction', 1.2, 'rejected'),
      row('a', 'C3', 'N2', 'rejected-fraction', 0.2, null),
      row('a', 'O2', 'N2', 'flat-channel', 0.3, null),
      row('b', 'O2', null, 'flat-channel', 7, 'flat'),
      row('b', null, null, 'clipping', 0.1, null),
    ];
    const g = buildGrid(
      [
        { recordingId: 'a', subject: 's-a', session: null },
        { recordingId: 'b', subject: 's-b', session: null },
      ],
      ['O2', 'C3'],
      rows,
    );
    expect(g.channels).toEqual(['O2', 'C3', RECORDING_COLUMN]);
    expect(g.metrics).toEqual(['clipping', 'flat-channel', 'mains-hum', 'rejected-fraction']);
    const cell = (s: string, c: string) => g.cells.find((x) => x.subject === s && x.channel === c)!;
    expect(cell('s-a', 'C3').score).toBe(2); // capped (cell-score.ts)
    expect(cell('s-a', 'C3').reasons).toEqual(['hum', 'rejected']);
    expect(cell('s-a', 'C3').metrics['rejected-fraction']).toEqual({ value: 2.4, severity: 1.2 });
    expect(cell('s-a', 'O2').score).toBe(0.3);
    expect(cell('s-a', 'O2').nFlagged).toBe(0);
    expect(cell('s-b', 'O2').worst).toBe('flat-channel');
    expect(cell('s-b', RECORDING_COLUMN).score).toBe(0.1);
    expect(g.cells.find((x) => x.subject === 's-b' && x.channel === 'C3')).toBeUndefined();
  });
});
