/** Synthetic RecordingBundle for the store tests: invented values, seeded, sizes as asked. */
import { Random } from '../../src/core/stats/random.ts';
import type { Stage } from '../../src/core/stages.ts';
import type { Reference, RecordingBundle, SpectrumRow } from '../../ingest/store/bundle.ts';

export interface BundleSize {
  channels: number;
  stages: readonly Stage[];
  references: readonly Reference[];
  nBins: number;
  epochs: number;
  bands: readonly string[];
}

export const SMALL: BundleSize = {
  channels: 3,
  stages: ['N2', 'N3'],
  references: ['recorded', 'average'],
  nBins: 181,
  epochs: 40,
  bands: ['delta', 'theta', 'sigma'],
};

export function fakeSha(seed: number): string {
  const r = new Random(seed);
  let s = '';
  for (let i = 0; i < 8; i++) s += r.nextUint32().toString(16).padStart(8, '0');
  return s;
}

export function makeBundle(runId: string, seed: number, size: BundleSize = SMALL): RecordingBundle {
  const rng = new Random(seed);
  const channels = Array.from({ length: size.channels }, (_, i) => `E${i + 1}`);
  const stageCycle: Stage[] = ['W', 'N1', 'N2', 'N3', 'R'];
  const spectra: SpectrumRow[] = [];
  for (const channel of channels)
    for (const stage of size.stages)
      for (const reference of size.references)
        for (const averaging of ['mean', 'median'] as const) {
          const power = new Float32Array(size.nBins);
          for (let k = 0; k < size.nBins; k++) power[k] = Math.exp(rng.normal()) / (1 + k * 0.25);
          spectra.push({
            channel,
            stage,
            reference,
            averaging,
            nEpochs: 10 + rng.int(100),
            nSegments: 100 + rng.int(1000),
            freqStartHz: 0,
            freqStepHz: 0.25,
            power,
            flagged: false,
            flagReason: null,
          });
        }
  const nBand = channels.length * size.epochs * size.bands.length;
  const channelIdx = new Int32Array(nBand);
  const epoch = new Int32Array(nBand);
  const bandIdx = new Int32Array(nBand);
  const bandPower = new Float32Array(nBand);
  let i = 0;
  for (let c = 0; c < channels.length; c++)
    for (let e = 0; e < size.epochs; e++)
      for (let b = 0; b < size.bands.length; b++, i++) {
        channelIdx[i] = c;
        epoch[i] = e;
        bandIdx[i] = b;
        bandPower[i] = Math.exp(rng.normal());
      }
  return {
    runId,
    recording: {
      subject: `sub-${seed}`,
      session: null,
      fileName: `rec-${seed}.edf`,
      fileSha256: fakeSha(seed),
      durationS: size.epochs * 30,
      status: 'ok',
      edfVariant: 'EDF+C',
      scoringSource: 'edf-annotations',
      epochLengthS: 30,
      nEpochs: size.epochs,
      nEpochsDropped: 0,
      tstMin: 10,
      sePct: 90.5,
      solMin: 3,
      stageMin: { W: 2, N2: 8 },
    },
    channels: channels.map((channel, k) => ({
      channel,
      type: 'EEG',
      unit: 'uV',
      fsHz: 256,
      prefilter: 'HP:0.3Hz LP:70Hz',
      x: k * 0.1,
      y: null,
      z: null,
      label: `EEG ${channel}`,
      referenceElectrode: null,
      physicalMin: -500,
      physicalMax: 500,
      digitalMin: -32768,
      digitalMax: 32767,
      recordedUnit: 'mV',
    })),
    epochs: {
      onsetS: Float64Array.from({ length: size.epochs }, (_, e) => e * 30),
      stage: Array.from({ length: size.epochs }, (_, e) => stageCycle[e % 5]),
    },
    rejections: [{ channel: channels[0], reference: 'recorded', epoch: 3, reason: 'amplitude', value: 812.5 }],
    spectra,
    bandPowers: [{ reference: 'recorded', channels, bands: [...size.bands], channelIdx, epoch, bandIdx, power: bandPower }],
    aperiodic: [
      {
        channel: channels[0],
        stage: size.stages[0],
        reference: 'recorded',
        averaging: 'mean',
        method: 'spectral-fit',
        fitLoHz: 1,
        fitHiHz: 40,
        offset: 1.25,
        exponent: 1.8,
        knee: 0,
        r2: 0.97,
        rmse: 0.05,
        nPeaks: 1,
      },
    ],
    peaks: [
      {
        channel: channels[0],
        stage: size.stages[0],
        reference: 'recorded',
        averaging: 'mean',
        method: 'spectral-fit',
        centerHz: 13.1,
        height: 0.4,
        bandwidthHz: 2.2,
      },
    ],
    quality: [{ channel: channels[0], stage: null, metric: 'flat-channel', value: 12.5, flagged: false, reason: null, severity: 0.16 }],
    referenceSkips: [{ reference: 'linked-mastoids', reason: 'no M1/M2 or A1/A2 channels' }],
    warnings: [
      { step: 'read', field: 'data records', message: '1 gap between data records (EDF+D), 15 s in all; epochs touching a gap are dropped' },
      { step: 'channels', field: 'physical dimension', message: `channel ${channels[0]}: recorded in mV, samples and physical limits scaled ×1000 to µV` },
    ],
  };
}
