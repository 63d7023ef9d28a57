// What the spectra view shows: per group, the mean spectrum of a chosen measure with its 95 %
// confidence band, the group mean aperiodic fit, and band power per channel for the scalp maps.
// Measures come from src/core/contrast/measure.ts (the same numbers a contrast tests).
import type { AperiodicRow, Exclusion, SpectrumRow } from '../../../core/contrast/data.ts';
import { measureLayout, measureValues } from '../../../core/contrast/measure.ts';
import { parseContrast, type Contrast } from '../../../core/contrast/spec.ts';
import { aperiodicLog10 } from '../../../core/spectrum/aperiodic-model.ts';
import type { Band } from '../../../core/spectrum/bands.ts';
import type { Stage } from '../../../core/stages.ts';
import type { SqlClient } from '../../../queries/client.ts';
import { contrastParticipants } from '../../../queries/contrast-data.ts';
import { aperiodicRows } from '../../../queries/fits.ts';
import { chooseRun, type RunInfo } from '../../../queries/runs.ts';
import type { CohortSchema } from '../../../queries/schema.ts';
import { spectraRows } from '../../../queries/spectra.ts';
import { storedEstimator } from '../../../queries/estimator.ts';
import { meanWithInterval, type MeanBand } from './group-mean.ts';
import { keepSubjects, partParticipants } from '../../../core/confirmation/part-data.ts';
import { workflowOf } from '../../../queries/workflow.ts';
import { frontToBack } from '../../../core/montage/channel-order.ts';

/** What the y axis shows. */
export type SpectrumMeasure = 'absolute' | 'log10' | 'relative' | 'residual';

export const MEASURE_LABELS: Record<SpectrumMeasure, string> = {
  absolute: 'PSD (µV²/Hz)',
  log10: 'log10 PSD (log10 µV²/Hz)',
  relative: 'log10 relative PSD (log10 1/Hz)',
  residual: 'residual: log10 PSD − aperiodic fit (log10)',
};

export interface SpectraRows {
  runId: string;
  stage: Stage;
  reference: string;
  freqStartHz: number;
  freqStepHz: number;
  nBins: number;
  rows: SpectrumRow[];
  aperiodic: AperiodicRow[];
  participants: Record<string, string | number | null>[];
  channels: string[];
}

export async function loadSpectraRows(
  db: SqlClient,
  schema: CohortSchema,
  runs: readonly RunInfo[],
  sel: { stage: Stage; reference: string; averaging: string },
): Promise<SpectraRows> {
  const run = chooseRun(runs);
  // the spectra view shows the Welch estimate
  const q = { runId: run.runId, ...sel, estimator: storedEstimator(schema, 'welch') };
  // issued together: duckdb-wasm runs them one after another in its worker, without waits between
  const [s, aperiodic, participants, { view }] = await Promise.all([
    spectraRows(db, q),
    aperiodicRows(db, q, 'fit'),
    contrastParticipants(db, schema),
    workflowOf(db, schema),
  ]);
  performance.mark('bandwise:spectra-rows');
  // while a split exists, the exploration part's subjects only (groups coded while blinded)
  const rows = keepSubjects(s.rows, view);
  return {
    runId: run.runId,
    stage: sel.stage,
    reference: sel.reference,
    ...s,
    rows,
    aperiodic: keepSubjects(aperiodic, view),
    participants: partParticipants(participants, view),
    channels: frontToBack([...new Set(rows.map((r) => r.channel))]),
  };
}

export interface GroupCurve {
  group: string;
  band: MeanBand;
  /** group mean aperiodic fit in the measure's unit, null when the measure has none */
  fit: Float64Array | null;
  subjects: string[];
}

export interface GroupSpectra {
  freqsHz: number[];
  measure: SpectrumMeasure;
  channels: string[];
  groups: GroupCurve[];
  /** subjects left out, with reasons (exclusions, flagged spectra, missing fits) */
  left: Exclusion[];
}

function keyOf(subject: string, channel: string): string {
  return `${subject}\u0000${channel}`;
}

/** The contrast-like settings the core measures read (one implementation of every measure). */
export function measureSettings(measure: SpectrumMeasure, fminHz: number, fmaxHz: number, relativeRangeHz: [number, number]): Contrast {
  return parseContrast({
    design: 'groups',
    groups: ['a', 'b'],
    measure: measure === 'relative' ? 'relative' : measure === 'residual' ? 'residual' : 'log-psd',
    fminHz,
    fmaxHz,
    relativeRangeHz,
  });
}

/**
 * Group curves of `measure` over `channels` (several: the mean over channels of each subject's
 * measure; absolute: the mean PSD). Subjects on the exclusion list, or with a flagged or missing
 * spectrum in one of the channels, are left out and listed.
 */
export function groupSpectra(
  d: SpectraRows,
  o: {
    groupColumn: string;
    channels: readonly string[];
    measure: SpectrumMeasure;
    fminHz: number;
    fmaxHz: number;
    relativeRangeHz: [number, number];
    exclusions: readonly Exclusion[];
  },
): GroupSpectra {
  const c = measureSettings(o.measure, o.fminHz, o.fmaxHz, o.relativeRangeHz);
  const axis = { freqStartHz: d.freqStartHz, freqStepHz: d.freqStepHz, nBins: d.nBins };
  const layout = measureLayout(c, axis);
  const P = layout.freqsHz.length;
  const spectra = new Map(d.rows.map((r) => [keyOf(r.subject, r.channel), r]));
  const fits = new Map(d.aperiodic.map((a) => [keyOf(a.subject, a.channel), a]));
  const groupOf = new Map(d.participants.map((p) => [String(p.subject), p[o.groupColumn]]));
  const subjects = [...new Set(d.rows.map((r) => r.subject))].sort();
  const left: Exclusion[] = [];
  const perGroup = new Map<string, { rows: Float64Array[]; fits: Float64Array[]; subjects: string[] }>();
  const scratch = new Float64Array(P);
  for (const subject of subjects) {
    const g = groupOf.get(subject);
    if (g === null || g === undefined) continue;
    const ex = o.exclusions.find((e) => e.subject === subject && (e.channel === null || o.channels.includes(e.channel)));
    if (ex) {
      left.push({ subject, channel: ex.channel, reason: `excluded in the quality screen: ${ex.reason}` });
      continue;
    }
    const values = new Float64Array(P);
    const fit = new Float64Array(P);
    let fitOk = true;
    let why: string | null = null;
    for (const ch of o.channels) {
      const row = spectra.get(keyOf(subject, ch));
      if (!row) {
        why = `no ${d.stage} spectrum for ${ch}`;
        break;
      }
      if (row.flagged) {
        why = `${d.stage} spectrum of ${ch} flagged: ${row.flagReason ?? 'flagged at ingest'}`;
        break;
      }
      const ap = fits.get(keyOf(subject, ch));
      if (o.measure === 'absolute') {
        for (let j = 0; j < P; j++) values[j] += row.power[layout.bins[j]] / o.channels.length;
      } else {
        const err = measureValues(c, layout, axis, row.power, ap, [], scratch);
        if (err) {
          why = `${ch}: ${err}`;
          break;
        }
        for (let j = 0; j < P; j++) values[j] += scratch[j] / o.channels.length;
      }
      if (ap && ap.offset !== null && ap.exponent !== null) {
        const p = { offset: ap.offset, exponent: ap.exponent, knee: ap.knee ?? 0 };
        for (let j = 0; j < P; j++) fit[j] += aperiodicLog10(layout.freqsHz[j], p) / o.channels.length;
      } else fitOk = false;
    }
    if (why) {
      left.push({ subject, channel: null, reason: why });
      continue;
    }
    const key = String(g);
    let entry = perGroup.get(key);
    if (entry === undefined) perGroup.set(key, (entry = { rows: [], fits: [], subjects: [] }));
    entry.rows.push(values);
    entry.subjects.push(subject);
    if (fitOk) entry.fits.push(fit);
  }
  const hasFit = o.measure === 'absolute' || o.measure === 'log10';
  const groups = [...perGroup.keys()].sort().map((group) => {
    const e = perGroup.get(group)!;
    let fit: Float64Array | null = null;
    if (hasFit && e.fits.length > 0) {
      // group mean of the fitted log10 aperiodic part; shown as a PSD (10^mean) for the absolute measure
      fit = meanWithInterval(e.fits, P).mean;
      if (o.measure === 'absolute') fit = fit.map((v) => 10 ** v);
    }
    return { group, band: meanWithInterval(e.rows, P), fit, subjects: e.subjects };
  });
  return { freqsHz: layout.freqsHz, measure: o.measure, channels: [...o.channels], groups, left };
}

/** What a scalp map shows: a band of the spectrum's measure, or an aperiodic parameter. */
export type MapMeasure = 'band-power' | 'relative-band-power' | 'residual' | 'offset' | 'exponent';
export const MAP_MEASURES: readonly MapMeasure[] = ['band-power', 'relative-band-power', 'residual', 'offset', 'exponent'];

/** The choices of the map, in words. */
export const MAP_MEASURE_NAMES: Record<MapMeasure, string> = {
  'band-power': 'band power',
  'relative-band-power': 'relative band power',
  residual: 'residual over the band',
  offset: 'aperiodic offset',
  exponent: 'aperiodic exponent',
};

/** The map of a spectrum measure: its band (absolute and log10 PSD: band power). */
export function mapMeasureOf(measure: SpectrumMeasure): MapMeasure {
  return measure === 'relative' ? 'relative-band-power' : measure === 'residual' ? 'residual' : 'band-power';
}

/** The map's measure in words and its unit (the colour bar). */
export function mapMeasureText(m: MapMeasure, band: Band, relativeRangeHz: [number, number]): { what: string; unit: string } {
  const inBand = `${band.name} ${band.loHz}–${band.hiHz} Hz`;
  return {
    'band-power': { what: `log10 ${inBand} power (mean density)`, unit: 'log10 µV²/Hz' },
    'relative-band-power': { what: `log10 ${inBand} power relative to ${relativeRangeHz[0]}–${relativeRangeHz[1]} Hz (integrals)`, unit: 'log10 ratio' },
    residual: { what: `mean residual (log10 PSD − aperiodic fit) over ${inBand}`, unit: 'log10' },
    offset: { what: 'aperiodic offset', unit: 'log10 µV²/Hz' },
    exponent: { what: 'aperiodic exponent', unit: 'exponent' },
  }[m];
}

export interface BandMapValues {
  band: Band;
  map: MapMeasure;
  channels: string[];
  /** per group: mean of the map's measure per channel (NaN where no subject has it) */
  groups: { group: string; n: number; values: number[] }[];
}

/**
 * Per channel and group, the mean over subjects of the map's measure (src/core/contrast/measure.ts,
 * the numbers a contrast tests; the residual averaged over the band's bins); exclusions, flagged
 * spectra and missing fits left out.
 */
export function bandMap(
  d: SpectraRows,
  o: { groupColumn: string; band: Band; map: MapMeasure; relativeRangeHz: [number, number]; exclusions: readonly Exclusion[] },
): BandMapValues {
  const c = parseContrast({
    design: 'groups',
    groups: ['a', 'b'],
    measure: o.map,
    bands: [o.band],
    fminHz: o.band.loHz,
    fmaxHz: o.band.hiHz,
    relativeRangeHz: o.relativeRangeHz,
    bandMethod: 'mean',
  });
  const axis = { freqStartHz: d.freqStartHz, freqStepHz: d.freqStepHz, nBins: d.nBins };
  const layout = measureLayout(c, axis);
  const out = new Float64Array(layout.freqsHz.length);
  const fits = new Map(d.aperiodic.map((a) => [keyOf(a.subject, a.channel), a]));
  const groupOf = new Map(d.participants.map((p) => [String(p.subject), p[o.groupColumn]]));
  const sums = new Map<string, { n: Set<string>; sum: Float64Array; count: Float64Array }>();
  const idx = new Map(d.channels.map((ch, i) => [ch, i]));
  for (const r of d.rows) {
    const g = groupOf.get(r.subject);
    if (g === null || g === undefined || r.flagged) continue;
    if (o.exclusions.some((e) => e.subject === r.subject && (e.channel === null || e.channel === r.channel))) continue;
    if (measureValues(c, layout, axis, r.power, fits.get(keyOf(r.subject, r.channel)), [], out) !== null) continue;
    let v = 0;
    for (let j = 0; j < out.length; j++) v += out[j] / out.length;
    if (!Number.isFinite(v)) continue;
    const key = String(g);
    let s = sums.get(key);
    if (s === undefined) sums.set(key, (s = { n: new Set(), sum: new Float64Array(d.channels.length), count: new Float64Array(d.channels.length) }));
    const i = idx.get(r.channel)!;
    s.sum[i] += v;
    s.count[i] += 1;
    s.n.add(r.subject);
  }
  const groups = [...sums.keys()].sort().map((group) => {
    const s = sums.get(group)!;
    return { group, n: s.n.size, values: Array.from(s.sum, (v, i) => (s.count[i] > 0 ? v / s.count[i] : Number.NaN)) };
  });
  return { band: o.band, map: o.map, channels: d.channels, groups };
}
