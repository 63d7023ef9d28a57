/**
 * Where and how `bandwise power` plants an effect in the second simulated group: the measure's
 * value at every planted point (channel × frequency of the contrast's layout) moves by the effect
 * times the point's share of the planted channels. One rule per measure, stated in the result:
 *
 *   log-psd, residual            + effect in log10 units (PSD × 10^effect; the residual's
 *                                  aperiodic fit is held, so the whole change is periodic)
 *   relative                     + effect in log10 units (relative PSD × 10^effect, the
 *                                  denominator held)
 *   band-power, relative-band-power  + effect in log10 units (these measures are log10 band powers,
 *                                  so adding is multiplying the band power by 10^effect)
 *   offset                       + effect in log10 µV²/Hz (the broadband level × 10^effect)
 *   exponent                     + effect, in exponent units (not log10)
 *   knee, peak-height, peak-center, peak-width: refused (no one planting rule fits them).
 *
 * A point is planted when its channel is one of the planted channels and its frequency (a bin's,
 * or a band measure's band centre) lies in the planted band, edges included; offset and exponent
 * have no frequency axis and take no band. With a channel average (one pseudo-channel, the mean of
 * the measure over C channels) m planted channels move the mean by effect·m/C, exactly.
 */
import type { Contrast, MeasureName } from '../contrast/spec.ts';
import type { MeasureLayout } from '../contrast/measure.ts';
import type { Band } from '../spectrum/bands.ts';

export class PlanningInputError extends Error {
  override name = 'PlanningInputError';
}

export const PLANTABLE_MEASURES = [
  'log-psd',
  'relative',
  'residual',
  'band-power',
  'relative-band-power',
  'offset',
  'exponent',
] as const satisfies readonly MeasureName[];

const RULES: Record<(typeof PLANTABLE_MEASURES)[number], string> = {
  'log-psd': 'log10 PSD + effect at each planted bin (PSD × 10^effect)',
  residual: 'residual (log10 PSD minus the aperiodic fit) + effect at each planted bin, the fit held (PSD × 10^effect)',
  relative: 'log10 relative PSD + effect at each planted bin (relative PSD × 10^effect, the denominator held)',
  'band-power': 'log10 band power + effect for each band whose centre lies in the planted band (band power × 10^effect)',
  'relative-band-power': 'log10 relative band power + effect for each band whose centre lies in the planted band (× 10^effect, the denominator held)',
  offset: 'aperiodic offset + effect, in log10 µV²/Hz (broadband level × 10^effect)',
  exponent: 'aperiodic exponent + effect, in exponent units (not log10)',
};

export function isPlantable(measure: MeasureName): measure is (typeof PLANTABLE_MEASURES)[number] {
  return (PLANTABLE_MEASURES as readonly string[]).includes(measure);
}

/** The planting rule of a measure in words; throws for a measure without one. */
export function plantingRule(measure: MeasureName): string {
  if (!isPlantable(measure)) throw new PlanningInputError(`measure ${measure} takes no planted effect; use ${PLANTABLE_MEASURES.join(', ')}`);
  return RULES[measure];
}

/** Whether the measure has a frequency axis along which a band is planted (not offset, exponent). */
export function measureTakesBand(measure: MeasureName): boolean {
  return measure !== 'offset' && measure !== 'exponent';
}

export interface PlantedRegion {
  /** 1 at each planted point (channel·F + frequency index of the layout) */
  region: Uint8Array;
  /** share of the effect each point takes (1; m/C for a channel average; 0 outside the region) */
  weight: Float64Array;
  /** the planted channels (contrast channel names) */
  channels: string[];
  /** frequencies of the planted points, Hz (band centres for band measures; [] for offset and exponent) */
  freqsHz: number[];
}

/**
 * The planted points of a contrast's layout. `contrastChannels` are the channels the contrast
 * reads (the members of a channel average); `pointChannels` the point layout's channels (one
 * pseudo-channel for an average). `channels` 'all' plants in every contrast channel.
 */
export function plantedRegion(
  c: Contrast,
  layout: MeasureLayout,
  contrastChannels: readonly string[],
  pointChannels: readonly string[],
  band: Band | null,
  channels: readonly string[] | 'all',
): PlantedRegion {
  plantingRule(c.measure);
  const takesBand = measureTakesBand(c.measure);
  if (takesBand && band === null) throw new PlanningInputError(`measure ${c.measure} needs the band to plant the effect in (--band LO-HI)`);
  if (!takesBand && band !== null) throw new PlanningInputError(`measure ${c.measure} has no frequency axis: give no band`);
  const planted = channels === 'all' ? [...contrastChannels] : [...channels];
  if (planted.length === 0) throw new PlanningInputError('no channel to plant the effect in');
  for (const ch of planted)
    if (!contrastChannels.includes(ch)) throw new PlanningInputError(`channel ${ch} is not one of the contrast's channels (${contrastChannels.join(', ')})`);
  if (new Set(planted).size !== planted.length) throw new PlanningInputError(`a planted channel is named twice: ${planted.join(', ')}`);
  const F = layout.freqsHz.length;
  const inBand = layout.freqsHz.map((f) => band === null || (f >= band.loHz - 1e-9 && f <= band.hiHz + 1e-9));
  if (!inBand.includes(true))
    throw new PlanningInputError(
      `no point of the contrast lies in ${band!.loHz}–${band!.hiHz} Hz (its points: ${layout.freqsHz[0]}–${layout.freqsHz[F - 1]} Hz)`,
    );
  const averaged = pointChannels.length === 1 && c.channelAverage;
  const region = new Uint8Array(pointChannels.length * F);
  const weight = new Float64Array(pointChannels.length * F);
  for (let ci = 0; ci < pointChannels.length; ci++) {
    // a channel average is the mean of the measure over its channels: m of C planted move it by m/C
    const share = averaged ? planted.length / contrastChannels.length : planted.includes(pointChannels[ci]) ? 1 : 0;
    if (share === 0) continue;
    for (let f = 0; f < F; f++) {
      if (!inBand[f]) continue;
      region[ci * F + f] = 1;
      weight[ci * F + f] = share;
    }
  }
  return { region, weight, channels: planted, freqsHz: takesBand ? layout.freqsHz.filter((_, f) => inBand[f]) : [] };
}
