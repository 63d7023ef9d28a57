// Each channel follows its own Nyquist frequency: a recording with EEG at 256 Hz and EMG at 1, 20,
// 64 and 512 Hz (written by libedf, an independent writer) is stored whole, each channel's
// spectrum, bands, rejection ranges and fit range up to its own fs/2, with a warning for what a
// channel cannot reach; the EEG spectra equal scipy.signal.welch on the planted signal.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import { makeTmpDir } from '../edf/helpers.ts';
import { runPython } from '../helpers/python.ts';
import { MIXED_SIGNALS, MIXED_STAGES, writeMixedRates } from './mixed-rates.ts';

let tmp: ReturnType<typeof makeTmpDir>;
let samples: Float64Array[];
type Bundle = Awaited<ReturnType<typeof processRecording>>;
let bundle: Bundle;
const params = resolveIngestParams({ channelTypes: ['EEG', 'EMG'], minEpochs: 2 });

beforeAll(async () => {
  tmp = makeTmpDir('nyquist');
  const written = writeMixedRates(tmp.dir);
  samples = written.samples;
  const rec: CohortRecording = { row: 1, subject: 's1', session: null, group: null, recordingPath: written.file, scoringPath: null, covariates: {} };
  bundle = await processRecording(rec, params);
}, 120_000);
afterAll(() => tmp?.cleanup());

const signalOf = (label: string) => MIXED_SIGNALS.findIndex((s) => s.label === label);

/** The epochs of a stage minus those rejected for the channel (recorded reference). */
function keptEpochs(channel: string, stage: string): number[] {
  const rejected = new Set(bundle.rejections.filter((r) => r.channel === channel && r.reference === 'recorded').map((r) => r.epoch));
  return MIXED_STAGES.map((s, e) => (s === stage && !rejected.has(e) ? e : -1)).filter((e) => e >= 0);
}

interface Job {
  label: string;
  epochs: number[];
  nBins: number;
  /** factor to µV (1000 for the channel stored in mV) */
  scale: number;
}

/** scipy.signal.welch (Hann, 4-s segments, half overlap, mean removed per segment) of each epoch, averaged over the job's epochs, first nBins bins; one python run for all jobs. */
function scipyStageMeans(jobs: Job[]): number[][] {
  const arrays = Object.fromEntries(MIXED_SIGNALS.map((s, k) => [`s${k}`, samples[k]]));
  const spec = jobs.map((j) => ({ k: signalOf(j.label), fs: MIXED_SIGNALS[signalOf(j.label)].fs, epochs: j.epochs, n_bins: j.nBins, scale: j.scale }));
  return runPython<number[][]>(
    `from scipy.signal import welch
out = []
for j in ${JSON.stringify(spec)}:
    x = numpy.fromfile(inputs['s%d' % j['k']]) * j['scale']
    fs = j['fs']
    n = 30 * fs
    ps = [welch(x[e * n:(e + 1) * n], fs, nperseg=4 * fs, noverlap=2 * fs)[1][:j['n_bins']] for e in j['epochs']]
    out.append(numpy.mean(ps, axis=0).tolist())
print(json.dumps(out))`,
    arrays,
  );
}

const maxRel = (a: ArrayLike<number>, b: ArrayLike<number>, from = 1) => {
  let m = 0;
  for (let k = from; k < b.length; k++) m = Math.max(m, Math.abs(a[k] - b[k]) / Math.abs(b[k]));
  return m;
};

const spectrum = (channel: string, stage = 'N2') =>
  bundle.spectra.find((s) => s.channel === channel && s.stage === stage && s.reference === 'recorded' && s.averaging === 'mean')!;

describe('each channel follows its own Nyquist frequency', () => {
  it('stores the EEG spectra to 45 Hz, equal to scipy.signal.welch over the kept epochs, whatever the slow channels', () => {
    const cells = ['C3', 'C4'].flatMap((ch) => ['W', 'N2'].map((stage) => ({ ch, stage, epochs: keptEpochs(ch, stage) })));
    const expected = scipyStageMeans(cells.map((c) => ({ label: `EEG ${c.ch}`, epochs: c.epochs, nBins: 181, scale: 1 })));
    cells.forEach(({ ch, stage, epochs }, i) => {
      expect(epochs.length).toBeGreaterThanOrEqual(stage === 'W' ? 3 : 6);
      const s = spectrum(ch, stage);
      expect(s.power.length).toBe(181); // 0 … 45 Hz in 0.25-Hz steps (not cut at the 64-Hz channel's 32 Hz)
      expect(s.nEpochs).toBe(epochs.length);
      expect(maxRel(s.power, expected[i])).toBeLessThan(1e-4); // Float32 storage
    });
  });

  it('stores each slow channel to its own Nyquist frequency, equal to scipy there', () => {
    // 1 Hz → 0–0.5 Hz (3 bins); 20 Hz → 0–10 Hz (41); 64 Hz → 0–32 Hz (129); 512 Hz → 0–45 Hz (181)
    const cells: [string, string, number, number][] = [
      ['Slow', 'EMG Slow', 3, 1],
      ['Chin', 'EMG Chin', 41, 1],
      ['Leg', 'EMG Leg', 129, 1000],
      ['Fast', 'EMG Fast', 181, 1],
    ];
    // EMG Leg is stored in mV and scaled to µV: its PSD in µV²/Hz is 10⁶ × the mV²/Hz one
    const expected = scipyStageMeans(cells.map(([ch, label, nBins, scale]) => ({ label, epochs: keptEpochs(ch, 'N2'), nBins, scale })));
    cells.forEach(([ch, , nBins], i) => {
      const s = spectrum(ch);
      expect(s.power.length, ch).toBe(nBins);
      expect(keptEpochs(ch, 'N2').length, ch).toBeGreaterThanOrEqual(6);
      expect(maxRel(s.power, expected[i]), ch).toBeLessThan(1e-4);
    });
  });

  it('computes only the bands a channel reaches, and fits up to its own Nyquist frequency', () => {
    const block = bundle.bandPowers.find((b) => b.reference === 'recorded')!;
    const bandsOf = (ch: string) => {
      const c = block.channels.indexOf(ch);
      const names = new Set<string>();
      for (let i = 0; i < block.power.length; i++) if (block.channelIdx[i] === c) names.add(block.bands[block.bandIdx[i]]);
      return [...names].sort();
    };
    // default bands delta 0.5–4, theta 4–8, alpha 8–12, sigma 12–16, beta 16–30, broadband 0.5–45 Hz
    expect(bandsOf('C3')).toEqual(['alpha', 'beta', 'broadband', 'delta', 'sigma', 'theta']);
    expect(bandsOf('Leg')).toEqual(['alpha', 'beta', 'delta', 'sigma', 'theta']);
    expect(bandsOf('Chin')).toEqual(['delta', 'theta']);
    expect(bandsOf('Slow')).toEqual([]);
    const fit = (ch: string) => bundle.aperiodic.filter((a) => a.channel === ch && a.method !== 'irasa').map((a) => [a.fitLoHz, a.fitHiHz]);
    expect(new Set(fit('C3').map(String))).toEqual(new Set(['1,40']));
    expect(new Set(fit('Leg').map(String))).toEqual(new Set(['1,32']));
    expect(new Set(fit('Chin').map(String))).toEqual(new Set(['1,10']));
    expect(fit('Slow')).toEqual([]);
  });

  it('says what each slow channel cannot reach, one warning per channel and rule', () => {
    const w = (bundle.warnings ?? []).map((x) => `${x.step}|${x.field}|${x.message}`);
    expect(w).toContain(
      'spectra|bands|channel Chin (20 Hz sampling, Nyquist 10 Hz): band power not computed for alpha (8–12 Hz), sigma (12–16 Hz), beta (16–30 Hz), broadband (0.5–45 Hz)',
    );
    expect(w).toContain('spectra|rejection.muscleHz|channel Chin (20 Hz sampling, Nyquist 10 Hz): the muscle outlier rule (25–45 Hz) is not applied');
    expect(w).toContain(
      'spectra|rejection.broadbandHz|channel Chin (20 Hz sampling, Nyquist 10 Hz): the broadband outlier rule uses 0.5–10 Hz instead of 0.5–45 Hz',
    );
    expect(w).toContain('fit|fit.fitRangeHz|channel Chin (20 Hz sampling, Nyquist 10 Hz): aperiodic fit over 1–10 Hz instead of 1–40 Hz');
    expect(w).toContain('fit|fit.fitRangeHz|channel Slow (1 Hz sampling, Nyquist 0.5 Hz): no aperiodic fit (fit range 1–40 Hz)');
    expect(w).toContain('spectra|rejection.broadbandHz|channel Slow (1 Hz sampling, Nyquist 0.5 Hz): the broadband outlier rule (0.5–45 Hz) is not applied');
    expect(w).toContain(
      'spectra|rejection.flatRunS|channel Slow (1 Hz sampling, Nyquist 0.5 Hz): the flat-run rule (1 s) is not applied: one sample lasts 1 s',
    );
    expect(w).toContain('spectra|bands|channel Leg (64 Hz sampling, Nyquist 32 Hz): band power not computed for broadband (0.5–45 Hz)');
    expect(w.filter((x) => /channel (C3|C4|Fast) /.test(x))).toEqual([]);
  });
});
