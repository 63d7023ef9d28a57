// A cohort for the workflow's statistical checks: synthetic spectra drawn from the spectral model
// of src/core/simulate/synthetic-database.ts (aperiodic background with subject and channel
// variation, an N2 sigma peak, Welch-average noise), as the ContrastData a contrast reads. Groups
// alternate by recording; the effects of the second group are set by the caller.
import type { ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { drawRecording, syntheticSpec } from '../../src/core/simulate/synthetic-database.ts';

export const CHANNELS = ['C3', 'C4'];

export function syntheticCohort(recordings: number, seed: number, effect: { offsetLog10: number; exponent: number; sigmaHeightLog10: number }): ContrastData {
  // 0–30 Hz in 0.5-Hz bins, N2 only, 2 channels: enough for every band measure, cheap to draw
  const spec = syntheticSpec({
    recordings,
    channels: CHANNELS,
    stages: ['N2'],
    freqStartHz: 0,
    freqStepHz: 0.5,
    nBins: 61,
    groups: ['control', 'patient'],
    effect,
    seed,
  });
  const rows: SpectrumRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let i = 0; i < recordings; i++) {
    const r = drawRecording(spec, i);
    participants.push({ subject: r.subject, group: r.group, age: r.age });
    CHANNELS.forEach((channel, c) => {
      rows.push({
        subject: r.subject,
        session: null,
        channel,
        stage: 'N2',
        nEpochs: r.nEpochs[0],
        flagged: false,
        flagReason: null,
        power: r.power.subarray(c * spec.nBins, (c + 1) * spec.nBins),
      });
    });
  }
  return { spectra: { freqStartHz: 0, freqStepHz: 0.5, nBins: 61, rows }, aperiodic: [], peaks: [], participants, exclusions: [] };
}
