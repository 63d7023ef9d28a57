// Test helpers that build EDF bytes by hand, straight from the field table of the EDF
// specification (Kemp et al. 1992 §2.1; EDF+ Kemp & Olivan 2003 §2.1–2.2), without using the
// project's writer, so reader tests do not rest on our own writer alone.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export function makeTmpDir(tag: string): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(join(tmpdir(), `bandwise-edf-${tag}-`));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

export interface HandSignal {
  label: string;
  transducer?: string;
  dim: string;
  pmin: string;
  pmax: string;
  dmin: string;
  dmax: string;
  prefilter?: string;
  spr: string;
}

export interface HandEdf {
  version?: string;
  patient: string;
  recording: string;
  date: string;
  time: string;
  /** Defaults to 256 + 256·ns. */
  headerBytes?: string;
  reserved: string;
  nRecords: string;
  duration: string;
  /** Defaults to the signal count. */
  ns?: string;
  signals: HandSignal[];
  /** Raw data-record bytes, concatenated after the header. */
  data: Uint8Array;
}

function field(value: string, width: number): string {
  // EDF 1992 §2.1: left-justified, space-padded ASCII (values longer than the width are cut).
  return value.slice(0, width).padEnd(width, ' ');
}

/** Header + data bytes, EDF 1992 §2.1 widths written out literally: 8,80,80,8,8,8,44,8,8,4 then 16,80,8,8,8,8,8,80,8,32. */
export function handEdf(h: HandEdf): Uint8Array {
  const ns = h.signals.length;
  let s = '';
  s += field(h.version ?? '0', 8);
  s += field(h.patient, 80);
  s += field(h.recording, 80);
  s += field(h.date, 8);
  s += field(h.time, 8);
  s += field(h.headerBytes ?? String(256 + 256 * ns), 8);
  s += field(h.reserved, 44);
  s += field(h.nRecords, 8);
  s += field(h.duration, 8);
  s += field(h.ns ?? String(ns), 4);
  const per: [keyof HandSignal, number][] = [
    ['label', 16],
    ['transducer', 80],
    ['dim', 8],
    ['pmin', 8],
    ['pmax', 8],
    ['dmin', 8],
    ['dmax', 8],
    ['prefilter', 80],
    ['spr', 8],
  ];
  for (const [key, width] of per) for (const sig of h.signals) s += field(sig[key] ?? '', width);
  for (let i = 0; i < ns; i++) s += field('', 32);
  const head = Buffer.from(s, 'latin1');
  const out = new Uint8Array(head.length + h.data.length);
  out.set(head, 0);
  out.set(h.data, head.length);
  return out;
}

/** Little-endian int16 bytes (EDF 1992 §2.2: 2-byte two's complement, LSB first). */
export function int16le(values: ArrayLike<number>): Uint8Array {
  const out = new Uint8Array(values.length * 2);
  for (let i = 0; i < values.length; i++) {
    const v = values[i] & 0xffff;
    out[2 * i] = v & 0xff;
    out[2 * i + 1] = v >> 8;
  }
  return out;
}

/** Annotation-signal bytes of one record: the given TAL text (\x14 etc. included), \x00-padded to `bytes`. */
export function talBytes(text: string, bytes: number): Uint8Array {
  const enc = Buffer.from(text, 'utf8');
  if (enc.length > bytes) throw new Error(`TAL text of ${enc.length} bytes does not fit ${bytes}`);
  const out = new Uint8Array(bytes);
  out.set(enc, 0);
  return out;
}

export function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((a, p) => a + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

export const FAKE_PATIENT_NAME = 'Quillfeather_Zebediah';
export const FAKE_BIRTHDATE = '29-FEB-1952';
export const FAKE_PATIENT_CODE = 'MCH-0012345';
export const FAKE_HOSPITAL = 'Bogusville_Sleep_Lab';

/** Digital sample values of goodEdfPlusSpec's record r: signal 0 (4 per record), signal 1 (2 per record). */
export function goodDigital(r: number): [number[], number[]] {
  return [
    [r * 10 + 1, -r * 10 - 2, 300 + r, -2048],
    [r * 7 - 100, 2047],
  ];
}

/**
 * A small valid EDF+C file built by hand: two ordinary signals (4 and 2 samples per 0.5-s
 * record, i.e. 8 and 4 Hz) and an annotation signal of 30 bytes; deterministic sample values.
 * Record 1 carries an extra TAL "+0.75\x150.25\x14Arousal\x14\x00".
 */
export function goodEdfPlusSpec(nRecords = 3): HandEdf {
  const records: Uint8Array[] = [];
  for (let r = 0; r < nRecords; r++) {
    const [a, b] = goodDigital(r);
    const tal = r === 1 ? `+${r * 0.5}\x14\x14\x00+0.75\x150.25\x14Arousal\x14\x00` : `+${r * 0.5}\x14\x14\x00`;
    records.push(int16le(a), int16le(b), talBytes(tal, 30));
  }
  return {
    patient: `${FAKE_PATIENT_CODE} F ${FAKE_BIRTHDATE} ${FAKE_PATIENT_NAME}`,
    recording: `Startdate 12-MAR-2004 ${FAKE_HOSPITAL} tech01 amp7`,
    date: '12.03.04',
    time: '23.01.59',
    reserved: 'EDF+C',
    nRecords: String(nRecords),
    duration: '0.5',
    signals: [
      {
        label: 'EEG C3-M2',
        dim: 'uV',
        pmin: '-204.8',
        pmax: '204.7',
        dmin: '-2048',
        dmax: '2047',
        spr: '4',
        transducer: 'AgAgCl cup',
        prefilter: 'HP:0.3Hz LP:35Hz',
      },
      { label: 'EMG chin', dim: 'uV', pmin: '-100', pmax: '100', dmin: '-2048', dmax: '2047', spr: '2' },
      { label: 'EDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-32768', dmax: '32767', spr: '15' },
    ],
    data: concat(records),
  };
}

/** One record of goodEdfPlusSpec's layout with a given annotation text (\x00-padded to 30 bytes). */
export function goodRecord(r: number, tal: string): Uint8Array {
  const [a, b] = goodDigital(r);
  return concat([int16le(a), int16le(b), talBytes(tal, 30)]);
}

/** BDF version field: byte 0xFF then "BIOSEMI" (handEdf writes header text as Latin-1, one byte per char). */
export const BDF_VERSION = '\xffBIOSEMI';

/** Little-endian 24-bit two's-complement bytes (BDF: 3-byte samples, least significant byte first). */
export function int24le(values: ArrayLike<number>): Uint8Array {
  const out = new Uint8Array(values.length * 3);
  for (let i = 0; i < values.length; i++) {
    const v = values[i] & 0xffffff;
    out[3 * i] = v & 0xff;
    out[3 * i + 1] = (v >> 8) & 0xff;
    out[3 * i + 2] = v >> 16;
  }
  return out;
}

/** Digital sample values of goodBdfPlusSpec's record r, spanning the 24-bit range: signal 0 (4 per record), signal 1 (2). */
export function goodDigital24(r: number): [number[], number[]] {
  return [
    [r * 100003 + 1, -r * 70001 - 2, 8388607 - r, -8388608 + r],
    [r * 7 - 8000000, 8388607 - 2 * r],
  ];
}

/** One record of goodBdfPlusSpec's layout with a given annotation text (\x00-padded to 45 bytes = 15 samples of 3 bytes). */
export function goodBdfRecord(r: number, tal: string): Uint8Array {
  const [a, b] = goodDigital24(r);
  return concat([int24le(a), int24le(b), talBytes(tal, 45)]);
}

/**
 * goodEdfPlusSpec as BDF+C: version 0xFF "BIOSEMI", reserved "BDF+C", 24-bit digital limits,
 * 3-byte samples, and a "BDF Annotations" signal of 15 samples (45 bytes) per 0.5-s record.
 * Signal 0 has gain 1 and offset 0 (physical = digital); signal 1 spans ±1000 µV.
 */
export function goodBdfPlusSpec(nRecords = 3): HandEdf {
  const h = goodEdfPlusSpec(nRecords);
  const records: Uint8Array[] = [];
  for (let r = 0; r < nRecords; r++) {
    records.push(goodBdfRecord(r, r === 1 ? `+${r * 0.5}\x14\x14\x00+0.75\x150.25\x14Arousal\x14\x00` : `+${r * 0.5}\x14\x14\x00`));
  }
  return {
    ...h,
    version: BDF_VERSION,
    reserved: 'BDF+C',
    signals: [
      { ...h.signals[0], pmin: '-8388608', pmax: '8388607', dmin: '-8388608', dmax: '8388607' },
      { ...h.signals[1], pmin: '-1000', pmax: '1000', dmin: '-8388608', dmax: '8388607' },
      { label: 'BDF Annotations', dim: '', pmin: '-1', pmax: '1', dmin: '-8388608', dmax: '8388607', spr: '15' },
    ],
    data: concat(records),
  };
}
