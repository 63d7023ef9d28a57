// EDF/EDF+ header parser. Field widths and rules follow the EDF specification (Kemp et al.
// 1992, "A simple format for exchange of digitized polygraphic recordings") and EDF+ (Kemp &
// Olivan 2003, "European data format 'plus' (EDF+)"). The local patient and recording
// identification fields are validated and dropped: they never leave this module.
import { EdfFormatError, showValue, type EdfErrorPlace } from './errors.ts';

/** Fixed part of the header: [name, width in bytes] in file order (EDF 1992 §2.1, 256 bytes). */
export const FIXED_FIELDS = [
  ['version', 8],
  ['local patient identification', 80],
  ['local recording identification', 80],
  ['start date', 8],
  ['start time', 8],
  ['number of bytes in header', 8],
  ['reserved', 44],
  ['number of data records', 8],
  ['duration of a data record', 8],
  ['number of signals', 4],
] as const;

/** Per-signal fields, each stored ns times in a row (EDF 1992 §2.1, 256 bytes per signal). */
export const SIGNAL_FIELDS = [
  ['label', 16],
  ['transducer type', 80],
  ['physical dimension', 8],
  ['physical minimum', 8],
  ['physical maximum', 8],
  ['digital minimum', 8],
  ['digital maximum', 8],
  ['prefiltering', 80],
  ['number of samples in each data record', 8],
  ['reserved', 32],
] as const;

export const FIXED_HEADER_BYTES = 256;
export const BYTES_PER_SIGNAL_HEADER = 256;
/** Label of the annotation signal (EDF+ 2003 §2.2.1). */
export const ANNOTATION_LABEL = 'EDF Annotations';

export interface EdfSignal {
  index: number;
  label: string;
  transducer: string;
  physicalDimension: string;
  physicalMin: number;
  physicalMax: number;
  digitalMin: number;
  digitalMax: number;
  prefilter: string;
  samplesPerRecord: number;
  /** samplesPerRecord / recordDurationS; 0 when the record duration is 0 (annotation-only file). */
  fsHz: number;
  isAnnotation: boolean;
  /** Physical units per digital step: (pmax − pmin)/(dmax − dmin). */
  gain: number;
  /** Physical value of digital 0: pmin − dmin·gain. */
  offset: number;
}

export interface EdfHeader {
  variant: 'EDF' | 'EDF+C' | 'EDF+D';
  /** Local start of the recording, 'YYYY-MM-DDTHH:MM:SS' (no time zone: EDF stores none). */
  startDate: string;
  headerBytes: number;
  /** Complete data records (a trailing partial record is not counted). */
  nRecords: number;
  recordDurationS: number;
  signals: EdfSignal[];
  warnings: string[];
}

/** Byte size of one data record: 2 bytes per sample of every signal (EDF 1992 §2.2). */
export function recordBytes(signals: readonly EdfSignal[]): number {
  let n = 0;
  for (const s of signals) n += 2 * s.samplesPerRecord;
  return n;
}

const INTEGER = /^[+-]?\d+$/;
// EDF+ 2003 §2.1.3.5: numbers in ASCII, a dot as decimal separator; exponents are tolerated.
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** Header text as Latin-1 (one char per byte), so every byte stays visible in messages. */
function latin1(bytes: Uint8Array, start: number, width: number): string {
  let s = '';
  for (let i = start; i < start + width; i++) s += String.fromCharCode(bytes[i]);
  return s;
}

class HeaderCursor {
  pos = 0;
  constructor(
    private readonly bytes: Uint8Array,
    private readonly file: string,
  ) {}

  take(width: number): string {
    const s = latin1(this.bytes, this.pos, width);
    this.pos += width;
    return s;
  }

  /** Integer field (right-trimmed ASCII); field and value named on failure. */
  integer(field: string, raw: string, place: EdfErrorPlace = {}): number {
    const v = raw.trim();
    if (!INTEGER.test(v)) throw new EdfFormatError(this.file, field, v, `"${showValue(v)}" is not an integer`, place);
    return Number(v);
  }

  decimal(field: string, raw: string, place: EdfErrorPlace = {}): number {
    const v = raw.trim();
    if (!DECIMAL.test(v)) throw new EdfFormatError(this.file, field, v, `"${showValue(v)}" is not a number`, place);
    const x = Number(v);
    if (!Number.isFinite(x)) throw new EdfFormatError(this.file, field, v, `"${showValue(v)}" is not a finite number`, place);
    return x;
  }
}

/** Printable US-ASCII only (EDF 1992 §2.1: header characters 32..126). */
function isPrintableAscii(s: string): boolean {
  return /^[\x20-\x7e]*$/.test(s);
}

/** Validates one identification field without ever putting its content into a message. */
function checkIdentification(field: string, raw: string, isPlus: boolean, warnings: string[]): void {
  if (!isPrintableAscii(raw)) warnings.push(`header field "${field}" holds bytes outside printable ASCII (content withheld)`);
  // EDF+ 2003 §2.1.3.3/§2.1.3.4: subfields separated by spaces (patient: code sex birthdate name; recording: "Startdate" …).
  if (isPlus) {
    const parts = raw.trim().split(/ +/);
    const need = field === 'local patient identification' ? 4 : 5;
    const ok = field === 'local patient identification' ? parts.length >= need : parts[0] === 'Startdate' && parts.length >= need;
    if (!ok) warnings.push(`header field "${field}" does not follow the EDF+ subfield layout (content withheld)`);
  }
}

/** EDF 1992 §2.1 dd.mm.yy and hh.mm.ss; EDF+ 2003 §2.1.3.2 year rule: 85–99 → 19yy, 00–84 → 20yy. */
function parseStart(file: string, dateRaw: string, timeRaw: string): string {
  const date = dateRaw.trim();
  const dm = /^(\d\d)\.(\d\d)\.(\d\d)$/.exec(date);
  if (!dm) throw new EdfFormatError(file, 'start date', date, `"${showValue(date)}" is not a date of the form dd.mm.yy`);
  const day = Number(dm[1]);
  const month = Number(dm[2]);
  const yy = Number(dm[3]);
  const year = yy >= 85 ? 1900 + yy : 2000 + yy;
  const daysInMonth = [31, year % 4 === 0 && (year % 100 !== 0 || year % 400 === 0) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
  if (month < 1 || month > 12 || day < 1 || day > daysInMonth[month - 1]) {
    throw new EdfFormatError(file, 'start date', date, `"${date}" is not a calendar date`);
  }
  const time = timeRaw.trim();
  const tm = /^(\d\d)\.(\d\d)\.(\d\d)$/.exec(time);
  if (!tm) throw new EdfFormatError(file, 'start time', time, `"${showValue(time)}" is not a time of the form hh.mm.ss`);
  const [h, m, s] = [Number(tm[1]), Number(tm[2]), Number(tm[3])];
  if (h > 23 || m > 59 || s > 59) throw new EdfFormatError(file, 'start time', time, `"${time}" is not a time of day`);
  const p2 = (x: number) => String(x).padStart(2, '0');
  return `${year}-${p2(month)}-${p2(day)}T${p2(h)}:${p2(m)}:${p2(s)}`;
}

/**
 * Parses and validates the header. `bytes` must start at file offset 0 and hold at least the
 * whole header (256 + 256·ns bytes) when the file is that long; `fileSizeBytes` is the size of
 * the whole file, used to check (or derive) the number of data records.
 * Throws EdfFormatError for every violation; never returns identification text.
 */
export function parseEdfHeader(bytes: Uint8Array, file: string, fileSizeBytes: number): EdfHeader {
  const warnings: string[] = [];
  const available = Math.min(bytes.length, fileSizeBytes);
  if (available < FIXED_HEADER_BYTES) {
    throw new EdfFormatError(file, 'file', String(available), `file is truncated: ${available} bytes, shorter than the 256-byte fixed EDF header`);
  }
  const c = new HeaderCursor(bytes, file);

  // EDF 1992 §2.1: version "0" (8 bytes).
  const version = c.take(8);
  if (version.trim() !== '0') throw new EdfFormatError(file, 'version', version.trim(), `version "${showValue(version.trim())}" is not "0" (not an EDF file)`);

  const reservedAt = 8 + 80 + 80 + 8 + 8 + 8;
  const reserved = latin1(bytes, reservedAt, 44);
  // EDF+ 2003 §2.1.3.1: reserved field starts with "EDF+C" or "EDF+D"; anything else is plain EDF.
  const variant: EdfHeader['variant'] = reserved.startsWith('EDF+C') ? 'EDF+C' : reserved.startsWith('EDF+D') ? 'EDF+D' : 'EDF';
  const isPlus = variant !== 'EDF';
  if (!isPlus && reserved.startsWith('EDF+')) {
    throw new EdfFormatError(file, 'reserved', reserved.trim(), `reserved field "${showValue(reserved.trim())}" starts with EDF+ but is neither EDF+C nor EDF+D`);
  }

  // EDF 1992 §2.1: local patient / recording identification, 80 bytes each — validated, then dropped.
  checkIdentification('local patient identification', c.take(80), isPlus, warnings);
  checkIdentification('local recording identification', c.take(80), isPlus, warnings);

  const startDate = parseStart(file, c.take(8), c.take(8));

  // EDF 1992 §2.1: number of bytes in header record (8).
  const headerBytes = c.integer('number of bytes in header', c.take(8));
  c.take(44); // reserved, read above
  // EDF 1992 §2.1: number of data records, −1 if unknown (8).
  let nRecords = c.integer('number of data records', c.take(8));
  if (nRecords < -1) throw new EdfFormatError(file, 'number of data records', String(nRecords), `number of data records ${nRecords} is negative`);
  // EDF 1992 §2.1: duration of a data record in seconds (8).
  const durRaw = c.take(8);
  const recordDurationS = c.decimal('duration of a data record', durRaw);
  if (recordDurationS < 0) throw new EdfFormatError(file, 'duration of a data record', durRaw.trim(), `record duration ${durRaw.trim()} s is negative`);
  // EDF 1992 §2.1: number of signals ns (4).
  const ns = c.integer('number of signals', c.take(4));
  if (ns <= 0) throw new EdfFormatError(file, 'number of signals', String(ns), `number of signals ${ns} is not positive: a file needs at least one signal`);

  // EDF 1992 §2.1: header bytes = 256 + 256·ns.
  const expectedHeader = FIXED_HEADER_BYTES + BYTES_PER_SIGNAL_HEADER * ns;
  if (headerBytes !== expectedHeader) {
    throw new EdfFormatError(file, 'number of bytes in header', String(headerBytes), `number of bytes in header ${headerBytes} disagrees with 256 + 256·${ns} signals = ${expectedHeader}`);
  }
  if (available < headerBytes) {
    throw new EdfFormatError(file, 'file', String(available), `file is truncated: ${available} bytes, shorter than its ${headerBytes}-byte header`);
  }

  // EDF 1992 §2.1: each per-signal field is stored ns times in a row.
  const raw: string[][] = SIGNAL_FIELDS.map(([, width]) => Array.from({ length: ns }, () => c.take(width)));
  const [labels, transducers, dims, pmins, pmaxs, dmins, dmaxs, prefilters, sprs] = raw;
  const signals: EdfSignal[] = [];
  for (let i = 0; i < ns; i++) {
    const label = labels[i].trim();
    const place = { signal: { index: i, label } };
    const physicalMin = c.decimal('physical minimum', pmins[i], place);
    const physicalMax = c.decimal('physical maximum', pmaxs[i], place);
    const digitalMin = c.integer('digital minimum', dmins[i], place);
    const digitalMax = c.integer('digital maximum', dmaxs[i], place);
    const samplesPerRecord = c.integer('number of samples in each data record', sprs[i], place);
    // EDF 1992 §2.2: samples are 16-bit two's complement, so digital limits lie in −32768..32767.
    for (const [field, v] of [['digital minimum', digitalMin], ['digital maximum', digitalMax]] as const) {
      if (v < -32768 || v > 32767) throw new EdfFormatError(file, field, String(v), `${field} ${v} is outside the 16-bit range −32768..32767`, place);
    }
    // EDF+ 2003 §2.1.3.5: digital maximum must exceed digital minimum.
    if (digitalMin >= digitalMax) {
      throw new EdfFormatError(file, 'digital minimum', String(digitalMin), `digital minimum ${digitalMin} is not below digital maximum ${digitalMax}`, place);
    }
    // EDF+ 2003 §2.1.3.5: physical maximum differs from physical minimum (pmax < pmin is a negative gain).
    if (physicalMin === physicalMax) {
      throw new EdfFormatError(file, 'physical minimum', pmins[i].trim(), `physical minimum ${pmins[i].trim()} equals physical maximum ${pmaxs[i].trim()}`, place);
    }
    if (samplesPerRecord <= 0) {
      throw new EdfFormatError(file, 'number of samples in each data record', String(samplesPerRecord), `number of samples in each data record ${samplesPerRecord} is not positive`, place);
    }
    // EDF+ 2003 §2.2.1: the annotation signal is labelled exactly "EDF Annotations".
    const isAnnotation = label === ANNOTATION_LABEL;
    if (isAnnotation && !isPlus) warnings.push(`signal ${i + 1} is labelled "${ANNOTATION_LABEL}" in a plain EDF file; it is read as an annotation signal`);
    const gain = (physicalMax - physicalMin) / (digitalMax - digitalMin);
    signals.push({
      index: i,
      label,
      transducer: transducers[i].trim(),
      physicalDimension: dims[i].trim(),
      physicalMin,
      physicalMax,
      digitalMin,
      digitalMax,
      prefilter: prefilters[i].trim(),
      samplesPerRecord,
      fsHz: recordDurationS > 0 ? samplesPerRecord / recordDurationS : 0,
      isAnnotation,
      gain,
      offset: physicalMin - digitalMin * gain,
    });
  }

  const nAnnotation = signals.filter((s) => s.isAnnotation).length;
  // EDF+ 2003 §2.1.3.6: record duration 0 only for files without ordinary signals.
  if (recordDurationS === 0 && nAnnotation < ns) {
    throw new EdfFormatError(file, 'duration of a data record', durRaw.trim(), `record duration ${durRaw.trim()} s is not positive although the file has ordinary signals`);
  }
  if (variant === 'EDF+D' && nAnnotation === 0) {
    throw new EdfFormatError(file, 'reserved', variant, `an EDF+D file needs an "${ANNOTATION_LABEL}" signal for its record onsets, none found`);
  }
  if (variant === 'EDF+C' && nAnnotation === 0) warnings.push(`EDF+C file without an "${ANNOTATION_LABEL}" signal; record onsets taken as k·duration`);

  // EDF 1992 §2.1/§2.2: the data records follow the header back to back; −1 records = unknown.
  const perRecord = recordBytes(signals);
  const dataBytes = fileSizeBytes - headerBytes;
  const whole = Math.floor(dataBytes / perRecord);
  const rest = dataBytes - whole * perRecord;
  if (nRecords === -1) {
    warnings.push(`number of data records is -1 (unknown); ${whole} records derived from the file size`);
    nRecords = whole;
  } else if (nRecords === whole + 1 && rest > 0) {
    warnings.push(`the last data record is incomplete (${rest} of ${perRecord} bytes) and is ignored`);
    nRecords = whole;
  } else if (nRecords !== whole) {
    throw new EdfFormatError(
      file,
      'number of data records',
      String(nRecords),
      `number of data records ${nRecords} disagrees with the file size: ${dataBytes} data bytes hold ${whole} records of ${perRecord} bytes`,
    );
  }
  if (rest > 0 && warnings.every((w) => !w.startsWith('the last data record'))) {
    warnings.push(`${rest} bytes after the last complete data record are ignored`);
  }

  return { variant, startDate, headerBytes, nRecords, recordDurationS, signals, warnings };
}
