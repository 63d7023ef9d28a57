/**
 * The per-recording quality metrics of each recorded channel (src/core/quality): clipping, flat
 * channel, mains hum and narrow spikes, from time-domain measures and the full-range spectrum
 * the epoch pass gathered.
 */
import type { ReferenceKind } from '../../src/core/montage/reference.ts';
import { clipping } from '../../src/core/quality/clipping.ts';
import { flatChannel } from '../../src/core/quality/flat-channel.ts';
import { DEFAULT_MAINS_HUM, mainsHum } from '../../src/core/quality/mains-hum.ts';
import { DEFAULT_NARROW_SPIKE, narrowSpikes } from '../../src/core/quality/narrow-spikes.ts';
import type { QualityRow } from '../../src/core/quality/row.ts';
import type { CohortRecording } from '../cohort/types.ts';
import type { QualityRowIn } from '../store/bundle.ts';
import type { Selected } from './channels.ts';
import type { EpochPassResult, PlanState } from './epoch-pass.ts';
import { evenlySpaced } from './grid.ts';
import type { IngestParams } from './params.ts';

/** Time-domain measures of one recorded channel over the kept epochs, for the quality metrics. */
export interface ChannelMeasures {
  channel: string;
  /** Fraction of samples at the physical (= digital) limits. */
  clippingFraction: number;
  /** Median over kept epochs of the epoch SD, µV. */
  medianSdUv: number;
  /** Mean PSD 0 … fullMaxHz over time-domain-clean epochs (mains-hum metric), µV²/Hz. */
  fullSpectrum: Float32Array;
  fullStepHz: number;
}

/** The measures of every selected channel, from the recorded reference's outputs. */
export function channelMeasures(
  selected: readonly Selected[],
  states: readonly PlanState[],
  pass: EpochPassResult,
  stepHz: number,
  epochS: number,
): ChannelMeasures[] {
  const { clipped, epochsSeen, epochSd } = pass;
  const recordedState = states.find((s) => s.plan.reference === 'recorded');
  return selected.map((s, c) => {
    const out = recordedState?.outputs.find((_, o) => recordedState.plan.outputs[o].source === c);
    const sds = epochSd[c].filter(Number.isFinite).sort();
    // a channel without clean epochs (flat all night, say) has no spectrum to assess
    const fullSpectrum = out?.fullSum && out.fullCount > 0 ? dividedBy(out.fullSum, out.fullCount) : new Float32Array(0);
    return {
      channel: s.name,
      clippingFraction: epochsSeen > 0 ? clipped[c] / (epochsSeen * Math.round(s.signal.fsHz * epochS)) : 0,
      medianSdUv: sds.length ? sds[Math.floor(sds.length / 2)] : NaN,
      fullSpectrum,
      fullStepHz: stepHz,
    };
  });
}

/** Clipping, flat channel, mains hum and narrow spikes of each channel (recorded reference). */
export function recordingQuality(
  measures: readonly ChannelMeasures[],
  selected: readonly Selected[],
  rec: CohortRecording,
  params: IngestParams,
  epochsSeen: number,
  epochS: number,
): QualityRowIn[] {
  const q = params.quality;
  const quality: QualityRowIn[] = [];
  const given = q.mainsHz.length === 1 ? q.mainsHz[0] : null;
  const lineHz = given ?? (rec.bids?.powerLineHz === 50 || rec.bids?.powerLineHz === 60 ? rec.bids.powerLineHz : null);
  const excludeHz = q.mainsHz.map((f): [number, number] => [f - q.mainsHalfWidthHz, f + q.mainsHalfWidthHz]);
  for (const m of measures) {
    const cell = { channel: m.channel, stage: null };
    const sel = selected.find((s) => s.name === m.channel)!;
    const nSamples = epochsSeen * Math.round(sel.signal.fsHz * epochS);
    quality.push(qualityIn(clipping(cell, nSamples, Math.round(m.clippingFraction * nSamples), { maxFraction: q.clippingMaxFraction }), 'recorded'));
    if (Number.isFinite(m.medianSdUv)) quality.push(qualityIn(flatChannel(cell, m.medianSdUv, { minSdUv: q.flatMinSdUv }), 'recorded'));
    if (m.fullSpectrum.length > 0) {
      const f = evenlySpaced(m.fullSpectrum.length, m.fullStepHz);
      // a known line the spectrum cannot reach (60 Hz at fs 128) is not assessable: pass null
      const reach = f[f.length - 1] >= (lineHz ?? 0) + DEFAULT_MAINS_HUM.outerHz;
      quality.push(
        qualityIn(mainsHum(cell, f, m.fullSpectrum, { ...DEFAULT_MAINS_HUM, lineHz: reach ? lineHz : null, thresholdDb: q.mainsThresholdDb }), 'recorded'),
      );
      // the mains lines (quality.mainsHz ± mainsHalfWidthHz) have their own metric and are left out of the spike search
      const spikes = narrowSpikes(cell, f, m.fullSpectrum, {
        ...DEFAULT_NARROW_SPIKE,
        heightLog10: q.narrowHeightLog10,
        maxWidthHz: q.narrowMaxWidthHz,
        excludeHz,
      });
      quality.push(qualityIn(spikes, 'recorded'));
    }
  }
  return quality;
}

/** A quality row of src/core/quality as the bundle holds it. */
export function qualityIn(r: QualityRow, reference: ReferenceKind): QualityRowIn {
  return { channel: r.channel, stage: r.stage, metric: r.metric, value: r.value, flagged: r.flagged, reason: r.reason, severity: r.severity, reference };
}

/** sum[k]/count as float32: a mean spectrum from its running sum. */
function dividedBy(sum: Float64Array, count: number): Float32Array {
  const mean = new Float32Array(sum.length);
  for (let k = 0; k < sum.length; k++) mean[k] = sum[k] / count;
  return mean;
}
