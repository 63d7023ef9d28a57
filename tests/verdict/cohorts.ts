/**
 * Simulated two-group cohorts for the band check's validation: one channel per subject, a stage
 * spectrum drawn from the aperiodic + peak model with Welch-average noise (simulateSpectrum), and
 * the aperiodic + peak fit ingest stores (fitSpectrum with ingest's defaults: 1–40 Hz,
 * power-law). No EDF: ContrastData is built directly.
 *
 * Per subject (the between-subject spreads are the demo scenario's: offset SD 0.1, exponent SD
 * 0.08, spindle frequency SD 2.5 % of the centre — our own invented values): offset b ~ N(2.0,
 * 0.1) log10 µV²/Hz, exponent χ ~ N(2.2, 0.08), knee 0; a slow-spindle peak at ~N(11, 0.275) Hz
 * (height 0.2, width SD 0.8 Hz) and a fast-spindle peak at ~N(13.5, 0.3375) Hz (height ~ N(0.4,
 * 0.08), width SD 1 Hz). The centres come from a stream of their own (seeded from the subject's
 * noise seed), so the other draws are those of the cohorts without a centre spread. Frequency
 * axis 0.5–45 Hz in 0.5-Hz bins (2-s segments), 1000 averaged segments (about 17 min of N2 with
 * 2-s segments at 50 % overlap; equivalent count per simulateSpectrum's note).
 */
import type { ContrastData, SpectrumRow, AperiodicRow, PeakRow } from '../../src/core/contrast/data.ts';
import { simulateSpectrum } from '../../src/core/simulate/spectrum.ts';
import { fitSpectrum } from '../../src/core/spectrum/aperiodic-fit.ts';
import { Random } from '../../src/core/stats/random.ts';
import { mixSeed } from '../../src/core/stats/relabelling.ts';

export const SCENARIOS = ['offset', 'exponent', 'peak', 'both', 'null', 'shift-1hz', 'shift-0.5hz'] as const;
export type ScenarioName = (typeof SCENARIOS)[number];

/** Planted effects in the patient group (log10 units; exponent dimensionless). */
export const EFFECTS = {
  offsetLog10: 0.15, // every power up by 0.15 log10 (×1.41), as the demo's broadband offset
  exponent: 0.25, // steeper spectrum, offset (power at 1 Hz) unchanged
  peakHeightLog10: -0.15, // fast-spindle peak 0.4 → 0.25 log10 above the aperiodic part
  bothPeakLog10: 0.15, // "both": offset +0.15 and the spindle peak +0.15, the same direction
  shiftHz: { 'shift-1hz': -1, 'shift-0.5hz': -0.5 } as Record<string, number>, // fast spindles slower, same height
};

/** Between-subject SD of each spindle centre as a fraction of it (the demo scenario's value). */
const CENTRE_SD_FRACTION = 0.025;

export const FIT_RANGE_HZ: [number, number] = [1, 40];
export const FREQ_START_HZ = 0.5;
export const FREQ_STEP_HZ = 0.5;
export const N_BINS = 90;

const freqs = Array.from({ length: N_BINS }, (_, k) => FREQ_START_HZ + k * FREQ_STEP_HZ);

interface SubjectBase {
  offset: number;
  exponent: number;
  fastHeight: number;
  noiseSeed: number;
  slowCenterHz: number;
  fastCenterHz: number;
}

function base(rng: Random): SubjectBase {
  const b = { offset: 2 + 0.1 * rng.normal(), exponent: 2.2 + 0.08 * rng.normal(), fastHeight: 0.4 + 0.08 * rng.normal(), noiseSeed: rng.nextUint32() };
  const centres = new Random(mixSeed(b.noiseSeed, 1));
  return { ...b, slowCenterHz: 11 * (1 + CENTRE_SD_FRACTION * centres.normal()), fastCenterHz: 13.5 * (1 + CENTRE_SD_FRACTION * centres.normal()) };
}

/** The planted fast-spindle centre of a subject in a scenario, Hz. */
export function plantedFastCentreHz(b: SubjectBase, scenario: ScenarioName | 'control'): number {
  return b.fastCenterHz + (EFFECTS.shiftHz[scenario] ?? 0);
}

function subjectRows(subject: string, b: SubjectBase, scenario: ScenarioName | 'control') {
  let { offset, exponent, fastHeight } = b;
  if (scenario === 'offset' || scenario === 'both') offset += EFFECTS.offsetLog10;
  if (scenario === 'exponent') exponent += EFFECTS.exponent;
  if (scenario === 'peak') fastHeight += EFFECTS.peakHeightLog10;
  if (scenario === 'both') fastHeight += EFFECTS.bothPeakLog10;
  const peaks = [
    { centerHz: b.slowCenterHz, height: 0.2, widthHz: 0.8 },
    { centerHz: plantedFastCentreHz(b, scenario), height: Math.max(0, fastHeight), widthHz: 1 },
  ];
  const power = simulateSpectrum({ aperiodic: { offset, exponent, knee: 0 }, peaks }, freqs, 1000, new Random(b.noiseSeed));
  const fit = fitSpectrum(freqs, power, { fitRangeHz: FIT_RANGE_HZ, aperiodicForm: 'power-law' });
  const key = { subject, session: null, channel: 'Cz', stage: 'N2' as const };
  const spectrum: SpectrumRow = { ...key, nEpochs: 60, flagged: false, flagReason: null, power: Float32Array.from(power) };
  const aperiodic: AperiodicRow = { ...key, offset: fit.offset, exponent: fit.exponent, knee: fit.knee };
  const peakRows: PeakRow[] = fit.peaks.map((p) => ({ ...key, centerHz: p.centerHz, height: p.height, bandwidthHz: p.bandwidthHz }));
  return { spectrum, aperiodic, peakRows };
}

const controlCache = new Map<string, ReturnType<typeof subjectRows>>();

/** 20 controls and 20 patients; cohort k's subjects are the same in every scenario, only the planted effect differs. */
export function simulateCohort(scenario: ScenarioName, cohort: number, perGroup = 20): ContrastData {
  const rng = new Random(90_001 + cohort * 7919);
  const rows: SpectrumRow[] = [];
  const aperiodic: AperiodicRow[] = [];
  const peaks: PeakRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (const group of ['control', 'patient'] as const) {
    for (let i = 0; i < perGroup; i++) {
      const subject = `${group === 'control' ? 'c' : 'p'}${String(i + 1).padStart(2, '0')}`;
      const b = base(rng);
      const cacheKey = `${cohort}/${subject}`;
      // controls are the same in every scenario: fit them once
      let r = group === 'control' ? controlCache.get(cacheKey) : undefined;
      if (!r) r = subjectRows(subject, b, group === 'control' ? 'control' : scenario);
      if (group === 'control') controlCache.set(cacheKey, r);
      rows.push(r.spectrum);
      aperiodic.push(r.aperiodic);
      peaks.push(...r.peakRows);
      participants.push({ subject, group });
    }
  }
  return { spectra: { freqStartHz: FREQ_START_HZ, freqStepHz: FREQ_STEP_HZ, nBins: N_BINS, rows }, aperiodic, peaks, participants, exclusions: [] };
}

/** The planted fast-spindle centre of every subject of a cohort (Hz), replaying the cohort's draws. */
export function plantedCentres(scenario: ScenarioName, cohort: number, perGroup = 20): Map<string, number> {
  const rng = new Random(90_001 + cohort * 7919);
  const out = new Map<string, number>();
  for (const group of ['control', 'patient'] as const) {
    for (let i = 0; i < perGroup; i++) {
      const b = base(rng);
      out.set(`${group === 'control' ? 'c' : 'p'}${String(i + 1).padStart(2, '0')}`, plantedFastCentreHz(b, group === 'control' ? 'control' : scenario));
    }
  }
  return out;
}
