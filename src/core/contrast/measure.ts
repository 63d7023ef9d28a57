/**
 * The measures a contrast can run on, computed from one stored spectrum (and its aperiodic fit
 * and peaks). Every spectral measure is in log10 units, stated in its description.
 */
import { INDIVIDUAL_BAND_MEASURES, type BandDefinition, type Contrast, type MeasureName } from './spec.ts';
import { individualRule } from './individual-bands.ts';
import type { AperiodicRow, PeakRow } from './data.ts';
import { bandPower, type Band } from '../spectrum/bands.ts';
import { aperiodicLog10 } from '../spectrum/aperiodic-model.ts';
import { ContrastDataError } from './data-error.ts';

export interface FrequencyAxis {
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
}

/** The points along frequency a measure produces for one channel. */
export interface MeasureLayout {
  /** frequency of each point, Hz (band measures: the band centre; aperiodic measures: 0) */
  freqsHz: number[];
  /** spectrum bins of the points (spectral measures only) */
  bins: number[];
  /** bands of band measures, in point order */
  bands: Band[];
  /** whether neighbouring points are neighbours in frequency (clusters may extend along them) */
  frequencyAdjacency: boolean;
  /** whether a value may be missing (NaN) for one channel × point of a subject (no peak in the band) */
  missingAllowed: boolean;
  description: string;
}

const SPECTRAL: readonly MeasureName[] = ['log-psd', 'relative', 'residual'];
const BANDED: readonly MeasureName[] = ['band-power', 'relative-band-power', 'peak-height', 'peak-center', 'peak-width'];
/** measures of the highest fitted peak in a band that have no value where the band holds no peak */
const MAY_BE_MISSING: readonly MeasureName[] = ['peak-center', 'peak-width'];

export function measureLayout(c: Contrast, axis: FrequencyAxis): MeasureLayout {
  const [rlo, rhi] = c.relativeRangeHz;
  if (SPECTRAL.includes(c.measure)) {
    // a range past the stored spectra is refused, not cut (the result would record the range asked for)
    const topHz = axis.freqStartHz + (axis.nBins - 1) * axis.freqStepHz;
    if (axis.nBins > 0 && c.fmaxHz > topHz + axis.freqStepHz / 2) {
      throw new ContrastDataError(`fmaxHz ${c.fmaxHz} Hz lies above the highest stored frequency, ${topHz} Hz; ask for at most ${topHz} Hz`);
    }
    const bins: number[] = [];
    for (let k = 0; k < axis.nBins; k++) {
      const f = axis.freqStartHz + k * axis.freqStepHz;
      if (f >= c.fminHz - 1e-9 && f <= c.fmaxHz + 1e-9 && (c.measure !== 'residual' || f > 0)) bins.push(k);
    }
    if (bins.length === 0) throw new Error(`no spectrum bin lies in ${c.fminHz}–${c.fmaxHz} Hz`);
    const description = {
      'log-psd': 'log10 PSD (µV²/Hz)',
      relative: `log10 relative PSD: PSD divided by the power integrated over ${rlo}–${rhi} Hz (trapezoid), 1/Hz`,
      residual: `residual spectrum: log10 PSD minus the aperiodic fit (${c.aperiodicMethod})`,
    }[c.measure as 'log-psd' | 'relative' | 'residual'];
    return { freqsHz: bins.map((k) => axis.freqStartHz + k * axis.freqStepHz), bins, bands: [], frequencyAdjacency: true, missingAllowed: false, description };
  }
  if (BANDED.includes(c.measure)) {
    const bands = [...(c.bands ?? [])].sort((a, b) => a.loHz + a.hiHz - (b.loHz + b.hiHz));
    const centres = bands.map((b) => (b.loHz + b.hiHz) / 2);
    for (let i = 1; i < centres.length; i++)
      if (!(centres[i] > centres[i - 1])) throw new Error(`bands ${bands[i - 1].name} and ${bands[i].name} share a centre`);
    const individual = c.bandDefinition === 'individual' && INDIVIDUAL_BAND_MEASURES.includes(c.measure);
    const names = bands
      .map((b) => {
        if (!individual) return `${b.name} ${b.loHz}–${b.hiHz} Hz`;
        const r = individualRule(c, b);
        return `${b.name} individual: centred on each subject's fitted peak in ${r.searchHz[0]}–${r.searchHz[1]} Hz (median over the channels), ±${r.halfWidthHz} Hz; the fixed ${b.loHz}–${b.hiHz} Hz where none`;
      })
      .join(', ');
    const description = {
      'band-power': `log10 band power (${c.bandMethod === 'mean' ? 'mean density, µV²/Hz' : 'trapezoid integral, µV²'}) in ${names}`,
      'relative-band-power': `log10 relative band power: integral over the band divided by the integral over ${rlo}–${rhi} Hz (trapezoid), in ${names}`,
      'peak-height': `height of the highest fitted peak centred in the band (log10 above the aperiodic fit; 0 where no peak was found), in ${names}`,
      'peak-center': `centre frequency (Hz) of the highest fitted peak centred in the band (missing for a channel without a peak there: each point uses the subjects with a value${c.channelAverage ? '; a channel average is the mean over the channels with a peak' : ''}), in ${names}`,
      'peak-width': `full width at half maximum (Hz) of the highest fitted peak centred in the band (missing for a channel without a peak there: each point uses the subjects with a value${c.channelAverage ? '; a channel average is the mean over the channels with a peak' : ''}), in ${names}`,
    }[c.measure as 'band-power' | 'relative-band-power' | 'peak-height' | 'peak-center' | 'peak-width'];
    return { freqsHz: centres, bins: [], bands, frequencyAdjacency: false, missingAllowed: MAY_BE_MISSING.includes(c.measure), description };
  }
  const description = {
    offset: `aperiodic offset (log10 µV²/Hz, ${c.aperiodicMethod})`,
    exponent: `aperiodic exponent (${c.aperiodicMethod})`,
    knee: `aperiodic knee (${c.aperiodicMethod})`,
  }[c.measure as 'offset' | 'exponent' | 'knee'];
  return { freqsHz: [0], bins: [], bands: [], frequencyAdjacency: false, missingAllowed: false, description };
}

/**
 * Writes the measure's values for one channel into out[0 … layout.freqsHz.length − 1] (NaN for a
 * missing value where layout.missingAllowed: no peak in that band). Returns null on success, or
 * the reason the values cannot be computed (missing fit…).
 */
export function measureValues(
  c: Contrast,
  layout: MeasureLayout,
  axis: FrequencyAxis,
  power: Float32Array,
  aperiodic: AperiodicRow | undefined,
  peaks: readonly PeakRow[],
  out: Float64Array,
): string | null {
  const step = axis.freqStepHz;
  switch (c.measure) {
    case 'log-psd':
      for (let i = 0; i < layout.bins.length; i++) out[i] = Math.log10(power[layout.bins[i]]);
      return null;
    case 'relative': {
      // relative density: P(f) / ∫ P over the denominator range (trapezoid rule)
      const total = bandPower(power, { name: 'total', loHz: c.relativeRangeHz[0], hiHz: c.relativeRangeHz[1] }, axis.freqStartHz, step, 'integral');
      if (!(total > 0)) return `no power in ${c.relativeRangeHz[0]}–${c.relativeRangeHz[1]} Hz`;
      for (let i = 0; i < layout.bins.length; i++) out[i] = Math.log10(power[layout.bins[i]] / total);
      return null;
    }
    case 'residual': {
      if (!aperiodic || aperiodic.offset === null || aperiodic.exponent === null) return 'no aperiodic fit';
      const ap = { offset: aperiodic.offset, exponent: aperiodic.exponent, knee: aperiodic.knee ?? 0 };
      for (let i = 0; i < layout.bins.length; i++) out[i] = Math.log10(power[layout.bins[i]]) - aperiodicLog10(layout.freqsHz[i], ap);
      return null;
    }
    case 'band-power':
      for (let i = 0; i < layout.bands.length; i++) out[i] = Math.log10(bandPower(power, layout.bands[i], axis.freqStartHz, step, c.bandMethod));
      return null;
    case 'relative-band-power': {
      const range = { name: 'total', loHz: c.relativeRangeHz[0], hiHz: c.relativeRangeHz[1] };
      const total = bandPower(power, range, axis.freqStartHz, step, 'integral');
      for (let i = 0; i < layout.bands.length; i++) out[i] = Math.log10(bandPower(power, layout.bands[i], axis.freqStartHz, step, 'integral') / total);
      return null;
    }
    case 'peak-height':
    case 'peak-center':
    case 'peak-width':
      for (let i = 0; i < layout.bands.length; i++) {
        const best = highestPeak(peaks, layout.bands[i]);
        // no peak: height 0 (nothing above the aperiodic fit); centre and width do not exist (missing)
        if (c.measure === 'peak-height') out[i] = best ? best.height : 0;
        else if (c.measure === 'peak-center') out[i] = best ? best.centerHz : NaN;
        else out[i] = best ? best.bandwidthHz : NaN;
      }
      return null;
    case 'offset':
    case 'exponent':
    case 'knee': {
      const v = aperiodic?.[c.measure];
      if (v === null || v === undefined) return 'no aperiodic fit';
      out[0] = v;
      return null;
    }
  }
}

/** The highest fitted peak centred in the band (edges included), or undefined. */
export function highestPeak(peaks: readonly PeakRow[], b: Band): PeakRow | undefined {
  let best: PeakRow | undefined;
  for (const p of peaks) if (p.centerHz >= b.loHz && p.centerHz <= b.hiHz && (!best || p.height > best.height)) best = p;
  return best;
}

/** Whether the measure needs aperiodic fits or peaks from the database (individual bands need the peaks). */
export function measureNeeds(measure: MeasureName, bandDefinition: BandDefinition = 'fixed'): { aperiodic: boolean; peaks: boolean } {
  return {
    aperiodic: measure === 'residual' || measure === 'offset' || measure === 'exponent' || measure === 'knee',
    peaks:
      measure === 'peak-height' ||
      measure === 'peak-center' ||
      measure === 'peak-width' ||
      (bandDefinition === 'individual' && INDIVIDUAL_BAND_MEASURES.includes(measure)),
  };
}
