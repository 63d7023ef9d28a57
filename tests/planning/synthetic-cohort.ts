/**
 * A synthetic cohort as ContrastData, drawn straight from the spectral model of
 * src/core/simulate/synthetic-database.ts (no EDF, no database): N2 spectra of the first channels
 * of the 10-10 list, the true aperiodic parameters as the aperiodic rows, participants with
 * subject, group (alternating), age (uniform 20–70 y) and an invented sex column. Its model has an
 * age slope on the exponent (−0.004 per year) and group effects given by `effect` (none by default).
 */
import type { AperiodicRow, ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { drawRecording, syntheticSpec, type SyntheticCohortSpec } from '../../src/core/simulate/synthetic-database.ts';

export interface SyntheticCohort {
  data: ContrastData;
  spec: SyntheticCohortSpec;
  ages: number[];
}

export function syntheticCohort(
  recordings: number,
  channelCount: number,
  seed: number,
  change?: (subject: number, channel: string, freqHz: number, ageYears: number) => number,
): SyntheticCohort {
  const spec = syntheticSpec({ recordings, channelCount, stages: ['N2'], seed, effect: { offsetLog10: 0, exponent: 0, sigmaHeightLog10: 0 } });
  const rows: SpectrumRow[] = [];
  const aperiodic: AperiodicRow[] = [];
  const participants: ContrastData['participants'] = [];
  const ages: number[] = [];
  for (let i = 0; i < recordings; i++) {
    const r = drawRecording(spec, i);
    ages.push(r.age);
    participants.push({ subject: r.subject, group: r.group, age: r.age, sex: i % 3 === 0 ? 'female' : 'male' });
    spec.channels.forEach((channel, c) => {
      const power = r.power.slice(c * spec.nBins, (c + 1) * spec.nBins);
      // an optional planted change, log10 units per subject × channel × frequency (and age)
      if (change) for (let k = 0; k < spec.nBins; k++) power[k] *= 10 ** change(i, channel, spec.freqStartHz + k * spec.freqStepHz, r.age);
      const key = { subject: r.subject, session: null, channel, stage: 'N2' as const };
      rows.push({ ...key, nEpochs: r.nEpochs[0], flagged: false, flagReason: null, power });
      aperiodic.push({ ...key, offset: r.offset[c], exponent: r.exponent[c], knee: 0 });
    });
  }
  return {
    data: {
      spectra: { freqStartHz: spec.freqStartHz, freqStepHz: spec.freqStepHz, nBins: spec.nBins, rows },
      aperiodic,
      peaks: [],
      participants,
      exclusions: [],
    },
    spec,
    ages,
  };
}
