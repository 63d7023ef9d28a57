// Streaming EDF / EDF+C writer (Kemp et al. 1992; Kemp & Olivan 2003), used by the synthetic
// cohort generator and the benchmarks. The header is written at open with "-1" data records
// (EDF 1992 §2.1: unknown while recording) and the real count is filled in by close().
import { open, type FileHandle } from 'node:fs/promises';
import { EdfFormatError, EdfIoError } from '../../ingest/edf/errors.ts';
import { ANNOTATION_LABEL, FIXED_FIELDS, SIGNAL_FIELDS } from '../../ingest/edf/header.ts';
import { encodeTal } from '../../ingest/edf/tal.ts';

export interface EdfWriteSignal {
  label: string;
  transducer?: string;
  physicalDimension: string;
  physicalMin: number;
  physicalMax: number;
  /** Default −32768 (EDF 1992 §2.2, 16-bit). */
  digitalMin?: number;
  /** Default 32767. */
  digitalMax?: number;
  prefilter?: string;
  samplesPerRecord: number;
}

export interface EdfWriteSpec {
  variant: 'EDF' | 'EDF+C';
  /** 'YYYY-MM-DDTHH:MM:SS', year 1985–2084 (EDF+ 2003 §2.1.3.2 two-digit year rule). */
  startDate: string;
  recordDurationS: number;
  /** Ordinary signals; for EDF+C an "EDF Annotations" signal is appended after them. */
  signals: EdfWriteSignal[];
  /** EDF+C only; onsets in seconds from the start date/time. */
  annotations?: { onsetS: number; durationS: number | null; text: string }[];
  /** Default "X X X X" (EDF+ 2003 §2.1.3.3: code sex birthdate name, all unknown). */
  patientId?: string;
  /** Default "Startdate X X X X" (EDF+ 2003 §2.1.3.4: date, admin code, technician, equipment unknown). */
  recordingId?: string;
}

/** Byte offset of "number of data records" in the fixed header (EDF 1992 §2.1). */
const N_RECORDS_OFFSET = 8 + 80 + 80 + 8 + 8 + 8 + 44;
/** Room for the time-keeping TAL "+<onset>\x14\x14\x00" with up to 9 integer and 7 decimal digits. */
const TIME_KEEPING_BYTES = 24;

/** Space-padded printable-ASCII header field of exactly `width` bytes (EDF 1992 §2.1). */
function asciiField(file: string, name: string, value: string, width: number): string {
  if (!/^[\x20-\x7e]*$/.test(value)) throw new EdfFormatError(file, name, value, `"${name}" must be printable ASCII to be written to an EDF header`);
  if (value.length > width) throw new EdfFormatError(file, name, value, `"${value}" is longer than the ${width} characters of "${name}"`);
  return value.padEnd(width, ' ');
}

/** Shortest decimal text of x that fits `width` characters (dot as separator, EDF+ 2003 §2.1.3.5). */
export function formatHeaderNumber(x: number, width: number): string | null {
  if (!Number.isFinite(x)) return null;
  const plain = String(x);
  if (plain.length <= width && !/e/i.test(plain)) return plain;
  for (let decimals = Math.min(15, width); decimals >= 0; decimals--) {
    let s = x.toFixed(decimals);
    if (s.includes('.')) s = s.replace(/\.?0+$/, '');
    if (s === '-0') s = '0';
    if (s.length <= width) return s;
  }
  return null;
}

function numberField(file: string, name: string, x: number, width: number): string {
  const s = formatHeaderNumber(x, width);
  if (s === null) throw new EdfFormatError(file, name, String(x), `${x} cannot be written in the ${width} characters of "${name}"`);
  return s.padEnd(width, ' ');
}

interface PlannedSignal {
  label: string;
  transducer: string;
  physicalDimension: string;
  pminText: string;
  pmaxText: string;
  physicalMin: number;
  physicalMax: number;
  digitalMin: number;
  digitalMax: number;
  prefilter: string;
  samplesPerRecord: number;
}

/** EDF 1992 §2.1 dd.mm.yy / hh.mm.ss from 'YYYY-MM-DDTHH:MM:SS'. */
function startFields(file: string, iso: string): [string, string] {
  const m = /^(\d{4})-(\d\d)-(\d\d)T(\d\d):(\d\d):(\d\d)$/.exec(iso);
  if (!m) throw new EdfFormatError(file, 'start date', iso, `start date "${iso}" is not of the form YYYY-MM-DDTHH:MM:SS`);
  const year = Number(m[1]);
  // EDF+ 2003 §2.1.3.2: two-digit years cover 1985–2084.
  if (year < 1985 || year > 2084) throw new EdfFormatError(file, 'start date', iso, `start year ${year} is outside 1985–2084, which dd.mm.yy can express`);
  return [`${m[3]}.${m[2]}.${m[1].slice(2)}`, `${m[4]}.${m[5]}.${m[6]}`];
}

export class EdfWriter {
  private recordsWritten = 0;
  private closed = false;
  /** Annotations grouped by the record whose time span holds their onset. */
  private readonly annotationsByRecord: Map<number, Uint8Array[]>;

  private constructor(
    private readonly fh: FileHandle,
    private readonly path: string,
    private readonly signals: PlannedSignal[],
    private readonly headerBytes: number,
    private readonly recordBytes: number,
    private readonly recordDurationS: number,
    private readonly annotationSamples: number,
    annotationsByRecord: Map<number, Uint8Array[]>,
  ) {
    this.annotationsByRecord = annotationsByRecord;
  }

  static async open(path: string, spec: EdfWriteSpec): Promise<EdfWriter> {
    const plus = spec.variant === 'EDF+C';
    if (spec.variant !== 'EDF' && spec.variant !== 'EDF+C')
      throw new EdfFormatError(path, 'reserved', String(spec.variant), `variant "${spec.variant}" is not EDF or EDF+C`);
    if (!plus && spec.annotations && spec.annotations.length > 0) {
      throw new EdfFormatError(
        path,
        'annotations',
        String(spec.annotations.length),
        `a plain EDF file cannot hold annotations (${spec.annotations.length} given); use EDF+C`,
      );
    }
    if (spec.signals.length === 0) throw new EdfFormatError(path, 'number of signals', '0', 'number of signals 0: at least one signal is needed');
    const d = spec.recordDurationS;
    const durText = numberField(path, 'duration of a data record', d, 8);
    if (!(d > 0) || Number(durText) !== d)
      throw new EdfFormatError(path, 'duration of a data record', String(d), `record duration ${d} s is not positive or not exact in 8 characters`);

    const planned: PlannedSignal[] = spec.signals.map((s) => {
      const pminText = numberField(path, 'physical minimum', s.physicalMin, 8).trim();
      const pmaxText = numberField(path, 'physical maximum', s.physicalMax, 8).trim();
      const digitalMin = s.digitalMin ?? -32768;
      const digitalMax = s.digitalMax ?? 32767;
      if (!Number.isInteger(digitalMin) || !Number.isInteger(digitalMax) || digitalMin < -32768 || digitalMax > 32767 || digitalMin >= digitalMax) {
        throw new EdfFormatError(
          path,
          'digital minimum',
          String(digitalMin),
          `digital range ${digitalMin}..${digitalMax} of "${s.label}" is not an increasing 16-bit range`,
        );
      }
      if (Number(pminText) === Number(pmaxText))
        throw new EdfFormatError(path, 'physical minimum', pminText, `physical minimum ${pminText} equals physical maximum of "${s.label}"`);
      if (!Number.isInteger(s.samplesPerRecord) || s.samplesPerRecord <= 0) {
        throw new EdfFormatError(
          path,
          'number of samples in each data record',
          String(s.samplesPerRecord),
          `samples per record ${s.samplesPerRecord} of "${s.label}" is not a positive integer`,
        );
      }
      return {
        label: s.label,
        transducer: s.transducer ?? '',
        physicalDimension: s.physicalDimension,
        pminText,
        pmaxText,
        physicalMin: Number(pminText),
        physicalMax: Number(pmaxText),
        digitalMin,
        digitalMax,
        prefilter: s.prefilter ?? '',
        samplesPerRecord: s.samplesPerRecord,
      };
    });

    // EDF+ 2003 §2.2.4: annotations go in the record covering their onset; the signal is sized for the fullest record.
    const byRecord = new Map<number, Uint8Array[]>();
    let annotationSamples = 0;
    if (plus) {
      for (const a of spec.annotations ?? []) {
        // eslint-disable-next-line no-control-regex -- the TAL delimiters are control bytes (EDF+ 2003 §2.2.2)
        if (/[\x00\x14\x15]/.test(a.text)) throw new EdfFormatError(path, 'annotations', a.text, `annotation text "${a.text}" contains a TAL delimiter byte`);
        if (!Number.isFinite(a.onsetS) || (a.durationS !== null && !(a.durationS >= 0))) {
          throw new EdfFormatError(
            path,
            'annotations',
            String(a.onsetS),
            `annotation at ${a.onsetS} s with duration ${a.durationS} is not a finite onset and non-negative duration`,
          );
        }
        const r = Math.max(0, Math.floor(a.onsetS / d + 1e-9));
        const list = byRecord.get(r) ?? [];
        list.push(encodeTal(a.onsetS, a.durationS, [a.text]));
        byRecord.set(r, list);
      }
      let fullest = 0;
      for (const list of byRecord.values())
        fullest = Math.max(
          fullest,
          list.reduce((acc, t) => acc + t.length, 0),
        );
      annotationSamples = Math.ceil((TIME_KEEPING_BYTES + fullest) / 2);
    }

    const ns = planned.length + (plus ? 1 : 0);
    const headerBytes = 256 + 256 * ns;
    const [date, time] = startFields(path, spec.startDate);
    const fixedValues: Record<(typeof FIXED_FIELDS)[number][0], string> = {
      version: '0',
      'local patient identification': spec.patientId ?? 'X X X X',
      'local recording identification': spec.recordingId ?? 'Startdate X X X X',
      'start date': date,
      'start time': time,
      'number of bytes in header': String(headerBytes),
      reserved: plus ? 'EDF+C' : '',
      'number of data records': '-1',
      'duration of a data record': durText.trim(),
      'number of signals': String(ns),
    };
    let text = '';
    for (const [name, width] of FIXED_FIELDS) {
      // Identification text is never quoted in errors (health data): check it here with a neutral message.
      if (name === 'local patient identification' || name === 'local recording identification') {
        const v = fixedValues[name];
        if (!/^[\x20-\x7e]*$/.test(v) || v.length > width)
          throw new EdfFormatError(path, name, '(withheld)', `"${name}" must be printable ASCII of at most ${width} characters (content withheld)`);
      }
      text += asciiField(path, name, fixedValues[name], width);
    }
    const all = plus
      ? [
          ...planned,
          {
            label: ANNOTATION_LABEL,
            transducer: '',
            physicalDimension: '',
            pminText: '-1',
            pmaxText: '1',
            physicalMin: -1,
            physicalMax: 1,
            digitalMin: -32768,
            digitalMax: 32767,
            prefilter: '',
            samplesPerRecord: annotationSamples,
          },
        ]
      : planned;
    const perSignal = (s: PlannedSignal): Record<(typeof SIGNAL_FIELDS)[number][0], string> => ({
      label: s.label,
      'transducer type': s.transducer,
      'physical dimension': s.physicalDimension,
      'physical minimum': s.pminText,
      'physical maximum': s.pmaxText,
      'digital minimum': String(s.digitalMin),
      'digital maximum': String(s.digitalMax),
      prefiltering: s.prefilter,
      'number of samples in each data record': String(s.samplesPerRecord),
      reserved: '',
    });
    // EDF 1992 §2.1: each per-signal field is written ns times in a row.
    for (const [name, width] of SIGNAL_FIELDS) for (const s of all) text += asciiField(path, name, perSignal(s)[name], width);

    let fh: FileHandle;
    try {
      fh = await open(path, 'w');
    } catch (cause) {
      throw new EdfIoError(path, 'create', cause);
    }
    const writer = new EdfWriter(fh, path, planned, headerBytes, 2 * all.reduce((a, s) => a + s.samplesPerRecord, 0), d, annotationSamples, byRecord);
    await writer.writeAt(Buffer.from(text, 'latin1'), 0);
    return writer;
  }

  private async writeAt(bytes: Uint8Array, position: number): Promise<void> {
    let done = 0;
    try {
      while (done < bytes.length) done += (await this.fh.write(bytes, done, bytes.length - done, position + done)).bytesWritten;
    } catch (cause) {
      throw new EdfIoError(this.path, 'write', cause);
    }
  }

  /**
   * Appends k data records. data[s] holds k·samplesPerRecord physical values of ordinary signal
   * s; values outside [physical min, physical max] are clipped to the digital limits.
   */
  async writeRecords(data: Float32Array[]): Promise<void> {
    if (this.closed) throw new EdfIoError(this.path, 'write', new Error('writer is closed'));
    const sigs = this.signals;
    if (data.length !== sigs.length) throw new RangeError(`${this.path}: ${data.length} sample arrays given for ${sigs.length} signals`);
    const k = data[0].length / sigs[0].samplesPerRecord;
    for (let s = 0; s < sigs.length; s++) {
      if (data[s].length !== k * sigs[s].samplesPerRecord || !Number.isInteger(k)) {
        throw new RangeError(
          `${this.path}: signal "${sigs[s].label}" has ${data[s].length} samples, not ${k}·${sigs[s].samplesPerRecord} (whole records, the same count for every signal)`,
        );
      }
    }
    if (k === 0) return;
    const buf = new ArrayBuffer(k * this.recordBytes);
    const i16 = new Int16Array(buf);
    const u8 = new Uint8Array(buf);
    let w = 0;
    for (let j = 0; j < k; j++) {
      for (let s = 0; s < sigs.length; s++) {
        const sig = sigs[s];
        const spr = sig.samplesPerRecord;
        const src = data[s];
        const inv = (sig.digitalMax - sig.digitalMin) / (sig.physicalMax - sig.physicalMin);
        // Inverse of EDF 1992 §2.2 scaling: dig = dmin + (phys − pmin)·(dmax − dmin)/(pmax − pmin), rounded and clipped.
        for (let i = 0; i < spr; i++) {
          const v = src[j * spr + i];
          if (Number.isNaN(v)) throw new RangeError(`${this.path}: signal "${sig.label}" sample ${j * spr + i} is NaN`);
          let dig = Math.round(sig.digitalMin + (v - sig.physicalMin) * inv);
          if (dig < sig.digitalMin) dig = sig.digitalMin;
          else if (dig > sig.digitalMax) dig = sig.digitalMax;
          i16[w++] = dig;
        }
      }
      if (this.annotationSamples > 0) {
        // EDF+ 2003 §2.2.4: time-keeping TAL first, then the record's annotations, then \x00 padding.
        const r = this.recordsWritten + j;
        let o = w * 2;
        const tk = encodeTal(r * this.recordDurationS, null, []);
        u8.set(tk, o);
        o += tk.length;
        for (const tal of this.annotationsByRecord.get(r) ?? []) {
          u8.set(tal, o);
          o += tal.length;
        }
        this.annotationsByRecord.delete(r);
        w += this.annotationSamples;
      }
    }
    await this.writeAt(u8, this.headerBytes + this.recordsWritten * this.recordBytes);
    this.recordsWritten += k;
  }

  /** Writes the record count into the header and closes; fails if annotations fell after the last record. */
  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    // the file is closed even when the count cannot be written; the first failure is the one thrown
    let failure: unknown = null;
    try {
      await this.writeAt(Buffer.from(String(this.recordsWritten).padEnd(8, ' '), 'latin1'), N_RECORDS_OFFSET);
    } catch (e) {
      failure = e;
    }
    try {
      await this.fh.close();
    } catch (cause) {
      failure ??= new EdfIoError(this.path, 'close', cause);
    }
    if (failure !== null) throw failure;
    const left = [...this.annotationsByRecord.values()].reduce((a, l) => a + l.length, 0);
    if (left > 0) throw new RangeError(`${this.path}: ${left} annotations have onsets after the last of ${this.recordsWritten} records and were not written`);
  }
}

/** Writes a whole small file in one go: data[s] holds all samples of ordinary signal s. */
export async function writeEdfFile(path: string, spec: EdfWriteSpec, data: Float32Array[]): Promise<void> {
  const w = await EdfWriter.open(path, spec);
  try {
    await w.writeRecords(data);
  } finally {
    await w.close();
  }
}
