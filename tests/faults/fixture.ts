/**
 * Small invented EDF/EDF+ recordings for the fault tests, built byte by byte from the field table
 * of the EDF specification (Kemp et al. 1992 §2.1–2.2) and the EDF+ rules for the annotation
 * signal and time-keeping TALs (Kemp & Olivan 2003 §2.2), through tests/edf/helpers.ts (which
 * does not use the project's writer). Records are 1 s long; the last signal is "EDF Annotations"
 * holding each record's time-keeping TAL and, in the first records, one 30-s stage annotation
 * each. Signals: AR(1) background noise plus a 13.5-Hz sine in N2, seeded.
 */
import { Random } from '../../src/core/stats/random.ts';
import { concat, handEdf, int16le, talBytes, type HandEdf, type HandSignal } from '../edf/helpers.ts';

/** EDF+ 2003 §2.2.3 / common practice: stage annotation texts. */
export const STAGE_TEXT: Record<string, string> = { W: 'Sleep stage W', N1: 'Sleep stage 1', N2: 'Sleep stage 2', N3: 'Sleep stage 3', R: 'Sleep stage R' };
/** Ten epochs (5 min) with every stage. */
export const STAGES_10 = ['W', 'N1', 'N2', 'N2', 'N3', 'N3', 'N2', 'R', 'R', 'W'];
/** Bytes of the annotation signal per 1-s record (24 samples × 2). */
const ANNOTATION_SPR = 24;

export interface FaultRecording {
  /** Electrode labels with their type prefix, e.g. 'EEG C3'. */
  labels: string[];
  /** Sampling rate per label, Hz (default 128 each). */
  fsHz?: number[];
  seed: number;
  /** One per epoch (default STAGES_10). */
  stages?: string[];
  /** EDF+D: data stop at gapStartS and resume gapS later (the recording keeps its length). */
  gap?: { startS: number; lengthS: number };
  patient?: string;
  recording?: string;
  /** Replaces the annotation bytes of one record (0-based) with this raw TAL text. */
  annotationOverride?: { record: number; text: string };
}

/** The HandEdf (header fields as text, data bytes) of one recording; edit it to break a rule. */
export function faultEdf(spec: FaultRecording): HandEdf {
  const stages = spec.stages ?? STAGES_10;
  const durationS = stages.length * 30;
  const fs = spec.fsHz ?? spec.labels.map(() => 128);
  const rng = new Random(spec.seed);
  // samples of each signal over the whole night (physical µV), then cut into 1-s records
  const physical = spec.labels.map((label, c) => {
    const n = durationS * fs[c];
    const x = new Float64Array(n);
    let s = 0;
    for (let i = 0; i < n; i++) {
      s = 0.95 * s + 4 * rng.normal();
      const st = stages[Math.floor(i / (30 * fs[c]))];
      x[i] = (1 + 0.1 * c) * s + (st === 'N2' ? 8 * Math.sin((2 * Math.PI * 13.5 * i) / fs[c]) : 0);
    }
    return x;
  });
  // EDF 1992 §2.2: digital = (phys − pmin)/(pmax − pmin)·(dmax − dmin) + dmin, int16
  const toDigital = (v: number) => Math.max(-32768, Math.min(32767, Math.round(((v + 3200) / 6400) * 65535 - 32768)));
  const onsets: number[] = [];
  for (let t = 0; t < durationS; t++) if (!spec.gap || t < spec.gap.startS || t >= spec.gap.startS + spec.gap.lengthS) onsets.push(t);
  const records: Uint8Array[] = [];
  onsets.forEach((t, r) => {
    for (let c = 0; c < spec.labels.length; c++) {
      const a = physical[c].subarray(t * fs[c], (t + 1) * fs[c]);
      records.push(int16le(Array.from(a, toDigital)));
    }
    let tal = `+${t}\x14\x14\x00`; // time-keeping TAL (EDF+ 2003 §2.2.4)
    if (r < stages.length) tal += `+${30 * r}\x1530\x14${STAGE_TEXT[stages[r]] ?? stages[r]}\x14\x00`;
    if (spec.annotationOverride?.record === r) tal = spec.annotationOverride.text;
    records.push(talBytes(tal, 2 * ANNOTATION_SPR));
  });
  const signals: HandSignal[] = spec.labels.map((label, c) => ({
    label,
    dim: 'uV',
    pmin: '-3200',
    pmax: '3200',
    dmin: '-32768',
    dmax: '32767',
    spr: String(fs[c]),
    prefilter: 'HP:0.3Hz LP:35Hz',
  }));
  signals.push({ label: 'EDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-32768', dmax: '32767', spr: String(ANNOTATION_SPR) });
  return {
    patient: spec.patient ?? 'X X X X',
    recording: spec.recording ?? 'Startdate 01-JAN-2020 X X X',
    date: '01.01.20',
    time: '22.00.00',
    reserved: spec.gap ? 'EDF+D' : 'EDF+C',
    nRecords: String(onsets.length),
    duration: '1',
    signals,
    data: concat(records),
  };
}

/** File bytes of one recording. */
export function faultEdfBytes(spec: FaultRecording, edit?: (h: HandEdf) => void): Uint8Array {
  const h = faultEdf(spec);
  edit?.(h);
  return handEdf(h);
}

/** Header length of a file with `ordinary` signals plus the annotation signal (EDF 1992 §2.1: 256 + 256·ns). */
export const headerBytesFor = (ordinary: number) => 256 + 256 * (ordinary + 1);
