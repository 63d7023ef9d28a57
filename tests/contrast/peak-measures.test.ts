/**
 * Peak measures over many channels when some channel × subject has no fitted peak in the band:
 * the value is missing for that point only (not for the subject everywhere), each point rests on
 * the subjects with a value, and a point with too few values is left out with a note instead of
 * failing the contrast. Outside reference: numpy picks the highest peak per subject × channel
 * from the same peak rows, and scipy.stats.ttest_ind (Welch) runs per channel on the values with
 * the NaNs dropped. Data: invented, 8 controls and 8 patients, channels C3, C4, P3, M1, M2;
 * spindle-like peaks at 13.5 Hz (controls) and 12.5 Hz (patients) on C3, C4, P3 with some
 * missing, a weaker second peak inside the band and one outside it; the mastoids have a peak
 * only in one subject (M1) or none (M2).
 */
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { assembleContrast } from '../../src/core/contrast/assemble.ts';
import type { ContrastData, PeakRow, SpectrumRow } from '../../src/core/contrast/data.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

const CHANNELS = ['C3', 'C4', 'P3', 'M1', 'M2'];
const N = 16;
const SIGMA = { name: 'sigma', loHz: 11, hiHz: 16 };
/** subject × channel pairs without a spindle peak on a scalp channel */
const NO_PEAK = new Set(['s02/C3', 's05/C3', 's10/P3', 's13/C4', 's13/P3']);

function cohort(): ContrastData {
  const rng = new Random(5);
  const rows: SpectrumRow[] = [];
  const peaks: PeakRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < N; s++) {
    const subject = `s${String(s).padStart(2, '0')}`;
    const patient = s >= N / 2;
    participants.push({ subject, group: patient ? 'patient' : 'control' });
    const centre = (patient ? 12.5 : 13.5) + 0.2 * rng.normal();
    for (const channel of CHANNELS) {
      const key = { subject, session: null, channel, stage: 'N2' as const };
      rows.push({ ...key, nEpochs: 60, flagged: false, flagReason: null, power: new Float32Array(60).fill(1) });
      peaks.push({ ...key, centerHz: 9.8 + 0.3 * rng.normal(), height: 0.9, bandwidthHz: 2 }); // outside the band, higher
      const scalp = !channel.startsWith('M');
      if ((scalp && !NO_PEAK.has(`${subject}/${channel}`)) || (channel === 'M1' && s === 3)) {
        peaks.push({ ...key, centerHz: centre + 0.1 * rng.normal(), height: 0.5 + 0.1 * rng.normal(), bandwidthHz: 2 + 0.3 * rng.normal() });
        peaks.push({ ...key, centerHz: 15.2, height: 0.1, bandwidthHz: 1 }); // a weaker peak in the band
      }
    }
  }
  return { spectra: { freqStartHz: 0, freqStepHz: 0.5, nBins: 60, rows }, aperiodic: [], peaks, participants, exclusions: [] };
}

const data = cohort();
const base = { design: 'groups', groups: ['control', 'patient'], stage: 'N2', bands: [SIGMA], permutations: 200, seed: 2 } as const;

// numpy: the highest peak centred in 11–16 Hz per subject × channel, NaN where none; Welch t per channel
const subjectIndex = (s: string) => Number(s.slice(1));
const ref = runPython<{ centre: (number | null)[][]; width: (number | null)[][]; t: (number | null)[]; tw: (number | null)[] }>(
  `from scipy import stats
pk = numpy.fromfile(inputs['peaks']).reshape(-1, 5)
centre = numpy.full((${N}, ${CHANNELS.length}), numpy.nan); width = centre.copy(); best = numpy.full(centre.shape, -numpy.inf)
for s, c, f, h, w in pk:
    s, c = int(s), int(c)
    if 11 <= f <= 16 and h > best[s, c]: best[s, c] = h; centre[s, c] = f; width[s, c] = w
def welch(x):
    out = []
    for c in range(x.shape[1]):
        a = x[:${N / 2}, c]; b = x[${N / 2}:, c]; a = a[~numpy.isnan(a)]; b = b[~numpy.isnan(b)]
        out.append(float(stats.ttest_ind(b, a, equal_var=False).statistic) if len(a) >= 2 and len(b) >= 2 else None)
    return out
nn = lambda m: [[None if numpy.isnan(v) else float(v) for v in row] for row in m]
print(json.dumps({"centre": nn(centre), "width": nn(width), "t": welch(centre), "tw": welch(width)}))`,
  { peaks: data.peaks.flatMap((p) => [subjectIndex(p.subject), CHANNELS.indexOf(p.channel), p.centerHz, p.height, p.bandwidthHz]) },
);

describe('peak measures with peaks missing per channel × subject', () => {
  it('peak-center over all channels: values per point, mastoids left out with a note, t equal to scipy per channel', () => {
    const r = compare(parseContrast({ ...base, measure: 'peak-center' }), data);
    // nobody is dropped from every channel for a missing peak on one
    expect(r.exclusions).toEqual([]);
    expect(r.n).toEqual({ control: 8, patient: 8 });
    for (let c = 0; c < CHANNELS.length; c++) {
      const col = ref.centre.map((row) => row[c]);
      const count = (lo: number, hi: number) => col.slice(lo, hi).filter((v) => v !== null).length;
      // the result orders all channels front to back (src/core/montage/channel-order.ts): one point per channel
      const at = r.statistics.channels.indexOf(CHANNELS[c]);
      expect(r.valuesPerPoint![at]).toEqual({
        channel: CHANNELS[c],
        freqHz: 13.5,
        band: 'sigma 11–16 Hz',
        n: { control: count(0, 8), patient: count(8, 16) },
        leftOut: ref.t[c] === null,
      });
      if (ref.t[c] === null) expect(r.statistics.stat[at]).toBeNaN();
      else expect(r.statistics.stat[at]).toBeCloseTo(ref.t[c]!, 9);
    }
    expect(r.valuesPerPoint!.map((p) => p.n)).toContainEqual({ control: 6, patient: 8 }); // C3: s02 and s05 without a peak
    expect(r.notes).toEqual([
      'sigma 11–16 Hz: 2 channels left out for too few values (a point needs at least 2 values per group and 3 in all): M1 (control 1, patient 0), M2 (control 0, patient 0)',
    ]);
    // the planted 1-Hz slowing: a negative cluster over the scalp channels only
    expect(r.clusters[0].sign).toBe(-1);
    expect(r.clusters[0].p).toBeLessThan(0.05);
    expect(r.clusters[0].channels.every((ch) => !ch.startsWith('M'))).toBe(true);
  });

  it('peak-width per point equals numpy on the same peak; peak-height stays 0 where no peak (nothing missing)', () => {
    const w = compare(parseContrast({ ...base, measure: 'peak-width', channels: ['C3', 'C4', 'P3'] }), data);
    for (let c = 0; c < 3; c++) expect(w.statistics.stat[c]).toBeCloseTo(ref.tw[c]!, 9);
    const h = assembleContrast(parseContrast({ ...base, measure: 'peak-height', channels: ['C3', 'M2'] }), data);
    expect(h.input.allowMissing).toBeUndefined();
    expect(h.input.data[2 * 2]).toBe(0); // s02 has no peak on C3
    expect(h.input.data[2 * 2 + 1]).toBe(0); // nor anybody on M2
  });

  it('channel average of the centre: mean over the channels with a peak; missing only where no channel has one', () => {
    const a = assembleContrast(parseContrast({ ...base, measure: 'peak-center', channels: ['C3', 'C4', 'P3'], channelAverage: true }), data);
    expect(a.subjects).toHaveLength(N);
    for (let s = 0; s < N; s++) {
      const vals = ref.centre[s].slice(0, 3).filter((v): v is number => v !== null);
      expect(a.input.data[s], `s${s}`).toBeCloseTo(vals.reduce((x, y) => x + y, 0) / vals.length, 12);
    }
    const m = assembleContrast(parseContrast({ ...base, measure: 'peak-center', channels: ['M1', 'M2'], channelAverage: true }), data);
    expect(Array.from(m.input.data).filter((v) => !Number.isNaN(v))).toHaveLength(1); // only s03 has a mastoid peak
    expect(() => compare(parseContrast({ ...base, measure: 'peak-center', channels: ['M1', 'M2'], channelAverage: true }), data)).toThrow(
      /no point has at least 2 values per group/,
    );
  });
});
