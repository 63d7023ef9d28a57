/** The frequency grid of a recording's stored spectra and the band tables laid on it. */
import { BandPowerTable, bandBins, type Band } from '../../src/core/spectrum/bands.ts';
import type { IngestParams } from './params.ts';

export interface FrequencyGrid {
  /** Bin spacing, Hz (1 / segment length). */
  step: number;
  /** Highest stored frequency, Hz. */
  storedMaxHz: number;
  /** Stored bins 0 … storedMaxHz. */
  nStored: number;
  /** Highest frequency of the full-range spectrum (mains-hum and narrow-spike metrics), Hz. */
  fullMaxHz: number;
  /** The bands with at least one stored bin. */
  bands: Band[];
  bandTable: BandPowerTable;
  /** The rejection rules' broadband and muscle ranges (src/core/quality/epoch-rejection.ts). */
  broadBand: BandPowerTable;
  muscleBand: BandPowerTable;
}

/** The grid of a recording whose selected channels sample at fsHz. */
export function recordingGrid(fsHz: readonly number[], params: IngestParams): FrequencyGrid {
  const step = 1 / params.segmentS;
  const nyquist = Math.min(...fsHz.map((fs) => fs / 2));
  const storedMaxHz = Math.min(params.maxFreqHz, nyquist);
  const nStored = Math.floor(storedMaxHz / step + 1e-9) + 1;
  const fullMaxHz = Math.min(params.qualityMaxFreqHz, nyquist);
  const bands = params.bands.filter((b) => bandBins(b, 0, step, nStored) !== null);
  const bandTable = new BandPowerTable(bands, 0, step, nStored, params.bandMethod);
  const { broadbandHz, muscleHz } = params.rejection;
  const broadBand = new BandPowerTable([{ name: 'broadband', loHz: broadbandHz[0], hiHz: Math.min(broadbandHz[1], fullMaxHz) }], 0, step, 1 << 20, 'mean');
  const muscleBand = new BandPowerTable([{ name: 'muscle', loHz: muscleHz[0], hiHz: Math.min(muscleHz[1], fullMaxHz) }], 0, step, 1 << 20, 'mean');
  return { step, storedMaxHz, nStored, fullMaxHz, bands, bandTable, broadBand, muscleBand };
}

/** 0, d, 2d, … (n values): epoch onsets, bin frequencies. */
export function evenlySpaced(n: number, d: number): Float64Array {
  const v = new Float64Array(n);
  for (let i = 0; i < n; i++) v[i] = i * d;
  return v;
}
