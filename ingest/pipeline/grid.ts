/**
 * The frequency grid of one sampling rate: each channel's stored range, band table, rejection
 * ranges and fit range follow its own Nyquist frequency (fs/2), so a slow channel (a 20-Hz EMG)
 * neither fails the recording nor cuts the spectra of the fast ones. What a channel cannot reach
 * is left out for it, with a note that becomes a warning row.
 */
import type { RejectionOptions } from '../../src/core/quality/epoch-rejection.ts';
import { BandPowerTable, bandBins, type Band } from '../../src/core/spectrum/bands.ts';
import { Multitaper } from '../../src/core/spectrum/multitaper.ts';
import { Welch } from '../../src/core/spectrum/welch.ts';
import type { WarningRow } from '../store/bundle.ts';
import { PipelineError } from './error.ts';
import type { IngestParams, MultitaperParams } from './params.ts';

export interface FrequencyGrid {
  fsHz: number;
  /** Bin spacing, Hz (1 / segment length). */
  step: number;
  /** Highest stored frequency, Hz: the lower of maxFreqHz and fs/2. */
  storedMaxHz: number;
  /** Stored bins 0 … storedMaxHz. */
  nStored: number;
  /** Frequencies of the stored bins, Hz. */
  freqs: Float64Array;
  /** Highest frequency of the full-range spectrum (mains-hum and narrow-spike metrics), Hz. */
  fullMaxHz: number;
  /** Welch estimator of this rate, 0 … fullMaxHz (shared across recordings, see sharedWelch). */
  welch: Welch;
  /** Multitaper estimator of this rate over the stored range (params.multitaper), null when not asked for; shared like welch. */
  multitaper: Multitaper | null;
  /** Per band of this grid's table: its index in params.bands. */
  bandIdx: Int32Array;
  bandTable: BandPowerTable;
  /** The time-domain rules for this rate: params.rejection, the flat-run rule left out when one sample lasts flatRunS or longer. */
  rejection: RejectionOptions;
  /** The rejection rules' broadband and muscle ranges (src/core/quality/epoch-rejection.ts); null when above fs/2. */
  broadBand: BandPowerTable | null;
  muscleBand: BandPowerTable | null;
  /** Aperiodic fit range, Hz, its top cut at storedMaxHz; null when fits are off or the range is above fs/2. */
  fitRange: [number, number] | null;
  /** What this rate cannot reach (step, field, message); channelNote names the channel. */
  notes: WarningRow[];
}

/** The grid of channels sampled at fsHz. */
export function frequencyGrid(fsHz: number, params: IngestParams, file: string): FrequencyGrid {
  const step = 1 / params.segmentS;
  const nyquist = fsHz / 2;
  const storedMaxHz = Math.min(params.maxFreqHz, nyquist);
  const nStored = Math.floor(storedMaxHz / step + 1e-9) + 1;
  const fullMaxHz = Math.min(params.qualityMaxFreqHz, nyquist);
  const notes: WarningRow[] = [];

  // a band above fs/2 cannot be measured; a band above the stored range (maxFreqHz) is a choice of the run and left out as before
  const reached: number[] = [];
  const beyond: Band[] = [];
  params.bands.forEach((b, i) => {
    if (b.hiHz > nyquist) beyond.push(b);
    else if (bandBins(b, 0, step, nStored) !== null) reached.push(i);
  });
  if (beyond.length > 0) {
    notes.push({
      step: 'spectra',
      field: 'bands',
      message: `band power not computed for ${beyond.map((b) => `${b.name} (${b.loHz}–${b.hiHz} Hz)`).join(', ')}`,
    });
  }
  const bandTable = new BandPowerTable(
    reached.map((i) => params.bands[i]),
    0,
    step,
    nStored,
    params.bandMethod,
  );

  // one sample lasting flatRunS would count as a flat run by itself: the rule cannot tell a flat channel here
  let rejection = params.rejection;
  if (1 / fsHz >= rejection.flatRunS) {
    rejection = { ...rejection, flatRunS: Infinity };
    notes.push({
      step: 'spectra',
      field: 'rejection.flatRunS',
      message: `the flat-run rule (${params.rejection.flatRunS} s) is not applied: one sample lasts ${1 / fsHz} s`,
    });
  }
  const { broadbandHz, muscleHz } = params.rejection;
  const ruleBand = (name: string, field: string, [lo, hi]: [number, number]): BandPowerTable | null => {
    const top = Math.min(hi, fullMaxHz);
    if (!(top > lo)) {
      notes.push({ step: 'spectra', field, message: `the ${name} outlier rule (${lo}–${hi} Hz) is not applied` });
      return null;
    }
    if (top < hi && nyquist < hi) notes.push({ step: 'spectra', field, message: `the ${name} outlier rule uses ${lo}–${top} Hz instead of ${lo}–${hi} Hz` });
    return new BandPowerTable([{ name, loHz: lo, hiHz: top }], 0, step, 1 << 20, 'mean');
  };
  const broadBand = ruleBand('broadband', 'rejection.broadbandHz', broadbandHz);
  const muscleBand = ruleBand('muscle', 'rejection.muscleHz', muscleHz);

  let fitRange: [number, number] | null = null;
  if (params.fit) {
    const [lo, hi] = params.fit.fitRangeHz;
    const top = Math.min(hi, storedMaxHz);
    if (!(top > lo)) notes.push({ step: 'fit', field: 'fit.fitRangeHz', message: `no aperiodic fit (fit range ${lo}–${hi} Hz)` });
    else {
      fitRange = [lo, top];
      if (top < hi && nyquist < hi)
        notes.push({ step: 'fit', field: 'fit.fitRangeHz', message: `aperiodic fit over ${lo}–${top} Hz instead of ${lo}–${hi} Hz` });
    }
  }

  const perSegment = params.segmentS * fsHz;
  if (Math.abs(perSegment - Math.round(perSegment)) > 1e-6) {
    // a rate that is not a whole number of Hz (199.8 Hz = 999 samples per 5-s record): say which segment would work
    const works = Array.from({ length: 120 }, (_, k) => Math.ceil(2 * params.segmentS) / 2 + k / 2).find(
      (sec) => Math.abs(sec * fsHz - Math.round(sec * fsHz)) <= 1e-6,
    );
    const hint = works === undefined ? '' : ` (--segment ${works}: ${Math.round(works * fsHz)} samples)`;
    throw new PipelineError(
      'spectra',
      file,
      'segment length',
      `a ${params.segmentS}-s segment at ${fsHz} Hz is ${Number(perSegment.toFixed(6))} samples, not a whole number; every recording shares the 1/segment-Hz grid, so choose a segment length whose samples are whole at this rate${hint} or resample the file`,
    );
  }
  let welch: Welch;
  try {
    welch = sharedWelch(fsHz, params.segmentS, params.overlap, fullMaxHz);
  } catch (e) {
    throw new PipelineError('spectra', file, 'segment length', (e as Error).message, { cause: e });
  }
  let multitaper: Multitaper | null = null;
  if (params.multitaper) {
    try {
      multitaper = sharedMultitaper(fsHz, params.segmentS, params.overlap, params.multitaper, storedMaxHz);
    } catch (e) {
      throw new PipelineError('spectra', file, 'multitaper', (e as Error).message, { cause: e });
    }
  }
  return {
    fsHz,
    step,
    storedMaxHz,
    nStored,
    freqs: evenlySpaced(nStored, step),
    fullMaxHz,
    welch,
    multitaper,
    bandIdx: Int32Array.from(reached),
    bandTable,
    rejection,
    broadBand,
    muscleBand,
    fitRange,
    notes,
  };
}

/**
 * Welch estimators kept across recordings (per sampling rate and parameters): their FFT tables
 * and buffers are built once per worker, not once per recording. Each call of Welch.mean is
 * synchronous, so recordings processed concurrently in one thread can share one.
 */
const welchCache = new Map<string, Welch>();

function sharedWelch(fsHz: number, segmentS: number, overlap: number, maxFreqHz: number): Welch {
  const key = `${fsHz}|${segmentS}|${overlap}|${maxFreqHz}`;
  let w = welchCache.get(key);
  if (!w) {
    w = new Welch(fsHz, { segmentS, overlap, maxFreqHz });
    welchCache.set(key, w);
  }
  return w;
}

/** Multitaper estimators kept across recordings, as welchCache: the tapers (an eigenproblem of the segment length) are computed once per worker. */
const multitaperCache = new Map<string, Multitaper>();

function sharedMultitaper(fsHz: number, segmentS: number, overlap: number, mt: MultitaperParams, maxFreqHz: number): Multitaper {
  const key = `${fsHz}|${segmentS}|${overlap}|${mt.nw}|${mt.k}|${maxFreqHz}`;
  let m = multitaperCache.get(key);
  if (!m) {
    m = new Multitaper(fsHz, { segmentS, overlap, nw: mt.nw, k: mt.k, maxFreqHz });
    multitaperCache.set(key, m);
  }
  return m;
}

/** 0, d, 2d, … (n values): epoch onsets, bin frequencies. */
export function evenlySpaced(n: number, d: number): Float64Array {
  const v = new Float64Array(n);
  for (let i = 0; i < n; i++) v[i] = i * d;
  return v;
}

/** A grid note as the warning of one channel: "channel EMG (20 Hz sampling, Nyquist 10 Hz): …". */
export function channelNote(channel: string, fsHz: number, note: WarningRow): WarningRow {
  return { ...note, message: `channel ${channel} (${fsHz} Hz sampling, Nyquist ${fsHz / 2} Hz): ${note.message}` };
}
