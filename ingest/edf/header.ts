// EDF/EDF+ and BDF/BDF+ header parser. Field widths and rules follow the EDF specification
// (Kemp et al. 1992, "A simple format for exchange of digitized polygraphic recordings") and EDF+
// (Kemp & Olivan 2003, "European data format 'plus' (EDF+)"); BDF is the 24-bit variant (BioSemi;
// no standard body, facts in shared/STANDARDS.md): version 0xFF "BIOSEMI", reserved "24BIT",
// 3-byte samples; BDF+ as EDFlib writes it ("BDF+C"/"BDF+D", a "BDF Annotations" signal). The
// local patient and recording identification fields are validated and dropped: they never leave
// this module, and no message quotes them.
import { EdfFormatError, quoteValue, safeValue, showValue, WITHHELD, type EdfErrorPlace } from './errors.ts';

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
/** Label of the annotation signal of BDF+ (as EDFlib writes it). */
export const BDF_ANNOTATION_LABEL = 'BDF Annotations';
/** BDF version field: byte 0xFF, then "BIOSEMI" (read as Latin-1). */
const BDF_VERSION = '\xffBIOSEMI';

/** 16-bit EDF/EDF+ or 24-bit BDF/BDF+; +C contiguous, +D discontinuous (EDF+ 2003 §2.1.3.1). */
export type EdfVariant = 'EDF' | 'EDF+C' | 'EDF+D' | 'BDF' | 'BDF+C' | 'BDF+D';

/**
 * Something the reader accepted with a compromise (a derived record count, ignored bytes, a
 * non-standard spelling). `field` names the header field ("file" for the file as a whole,
 * "annotations" for the annotation signal); the message never quotes identification or
 * annotation text.
 */
export interface EdfWarning {
  field: string;
  message: string;
}

/** True for EDF+ and BDF+ (annotation signal, time-keeping TALs). */
export function isPlusVariant(variant: EdfVariant): boolean {
  return variant.length > 3;
}

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
  variant: EdfVariant;
  /** Bytes per sample: 2 (EDF, EDF+) or 3 (BDF, BDF+), little-endian two's complement. */
  bytesPerSample: 2 | 3;
  /** Local start of the recording, 'YYYY-MM-DDTHH:MM:SS' (no time zone: EDF stores none). */
  startDate: string;
  headerBytes: number;
  /** Complete data records (a trailing partial record is not counted). */
  nRecords: number;
  recordDurationS: number;
  signals: EdfSignal[];
  warnings: EdfWarning[];
}

/** Byte size of one data record: bytesPerSample bytes per sample of every signal (EDF 1992 §2.2; BDF 3). */
export function recordBytes(signals: readonly EdfSignal[], bytesPerSample: number): number {
  let n = 0;
  for (const s of signals) n += bytesPerSample * s.samplesPerRecord;
  return n;
}

const INTEGER = /^[+-]?\d+$/;
// EDF+ 2003 §2.1.3.5: numbers in ASCII, a dot as decimal separator; exponents are accepted with a warning.
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** Header text as Latin-1 (one char per byte), so every byte is kept. */
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
    if (!INTEGER.test(v)) throw new EdfFormatError(this.file, field, safeValue(v), `${quoteValue(v)} is not an integer`, place);
    return Number(v);
  }

  decimal(field: string, raw: string, place: EdfErrorPlace = {}): number {
    const v = raw.trim();
    if (!DECIMAL.test(v)) throw new EdfFormatError(this.file, field, safeValue(v), `${quoteValue(v)} is not a number`, place);
    const x = Number(v);
    if (!Number.isFinite(x)) throw new EdfFormatError(this.file, field, v, `"${v}" is not a finite number`, place);
    return x;
  }
}

/** Printable US-ASCII only (EDF 1992 §2.1: header characters 32..126). */
function isPrintableAscii(s: string): boolean {
  return /^[\x20-\x7e]*$/.test(s);
}

/** "signal 3" or "signals 1, 2, 5" (1-based), at most ten named. */
function signalList(indices: number[]): string {
  if (indices.length === 1) return `signal ${indices[0] + 1}`;
  const named = indices
    .slice(0, 10)
    .map((i) => i + 1)
    .join(', ');
  return `signals ${named}${indices.length > 10 ? ` and ${indices.length - 10} more` : ''}`;
}

/** The warnings in the order first met; those about signals gathered into one per field and kind, naming the signals. */
class WarningList {
  readonly list: EdfWarning[] = [];
  private readonly bySignal = new Map<string, { warning: EdfWarning; message: string; signals: number[] }>();

  add(field: string, message: string): void {
    this.list.push({ field, message });
  }

  signal(field: string, index: number, message: string): void {
    const key = `${field}\u0000${message}`;
    let g = this.bySignal.get(key);
    if (!g) {
      g = { warning: { field, message }, message, signals: [] };
      this.bySignal.set(key, g);
      this.list.push(g.warning);
    }
    g.signals.push(index);
  }

  done(): EdfWarning[] {
    for (const g of this.bySignal.values()) g.warning.message = `${signalList(g.signals)}: ${g.message}`;
    return this.list;
  }
}

/** Validates one identification field without ever putting its content into a message. */
function checkIdentification(field: string, raw: string, isPlus: boolean, warnings: WarningList): void {
  if (!isPrintableAscii(raw)) warnings.add(field, 'holds bytes outside printable ASCII (content withheld)');
  // EDF+ 2003 §2.1.3.3/§2.1.3.4: subfields separated by spaces (patient: code sex birthdate name; recording: "Startdate" …).
  if (isPlus) {
    const parts = raw.trim().split(/ +/);
    const need = field === 'local patient identification' ? 4 : 5;
    const ok = field === 'local patient identification' ? parts.length >= need : parts[0] === 'Startdate' && parts.length >= need;
    if (!ok) warnings.add(field, 'does not follow the EDF+ subfield layout (content withheld)');
  }
}

// "µ" spelled in the physical dimension: Latin-1 byte 0xB5, or UTF-8 of MICRO SIGN (C2 B5) or
// GREEK SMALL LETTER MU (CE BC) read as Latin-1. EDF asks for ASCII ("uV"); STANDARDS.md: treat 0xB5 as µ.
const MICRO_SPELLINGS: [string, string][] = [
  ['\xc2\xb5', 'UTF-8 bytes C2 B5 (micro sign)'],
  ['\xce\xbc', 'UTF-8 bytes CE BC (Greek mu)'],
  ['\xb5', 'the Latin-1 byte B5'],
];

/** The physical dimension with a non-ASCII µ read as "µ" (U+00B5), and a warning saying which spelling. */
function physicalDimension(raw: string, index: number, warnings: WarningList): string {
  let dim = raw.trim();
  for (const [bytes, name] of MICRO_SPELLINGS) {
    if (!dim.startsWith(bytes)) continue;
    dim = `µ${dim.slice(bytes.length)}`;
    if (isPrintableAscii(dim.slice(1))) {
      warnings.signal('physical dimension', index, `"µ" written as ${name} (EDF asks for ASCII, e.g. "uV"); read as µ`);
      return dim;
    }
    break;
  }
  if (!isPrintableAscii(raw)) warnings.signal('physical dimension', index, 'holds bytes outside printable ASCII; read as Latin-1 (content withheld)');
  return raw.trim();
}

/** Day, month and 4-digit year of the EDF+ "Startdate dd-MMM-yyyy" subfield (EDF+ 2003 §2.1.3.3), or null ("X", absent, malformed). */
function startdateSubfield(recording: string): { day: number; month: number; year: number } | null {
  const [word, date] = recording.trim().split(/ +/);
  const m = word === 'Startdate' ? /^(\d\d)-([A-Za-z]{3})-(\d{4})$/.exec(date ?? '') : null;
  const month = m ? MONTHS.indexOf(m[2].toUpperCase()) + 1 : 0;
  return m && month > 0 ? { day: Number(m[1]), month, year: Number(m[3]) } : null;
}
const MONTHS = ['JAN', 'FEB', 'MAR', 'APR', 'MAY', 'JUN', 'JUL', 'AUG', 'SEP', 'OCT', 'NOV', 'DEC'];

/**
 * EDF 1992 §2.1 dd.mm.yy and hh.mm.ss; EDF+ 2003 §2.1.3.2 year rule: 85–99 → 19yy, 00–84 → 20yy,
 * and the letters "yy" after 2084. An EDF+ Startdate subfield with the same day, month and
 * two-digit year gives the 4-digit year (its text is never quoted).
 */
function parseStart(file: string, dateRaw: string, timeRaw: string, sub: ReturnType<typeof startdateSubfield>, warnings: WarningList): string {
  const date = dateRaw.trim();
  const dm = /^(\d\d)\.(\d\d)\.(\d\d|yy)$/i.exec(date);
  if (!dm) throw new EdfFormatError(file, 'start date', safeValue(date), `${quoteValue(date)} is not a date of the form dd.mm.yy`);
  const day = Number(dm[1]);
  const month = Number(dm[2]);
  const yy = /^yy$/i.test(dm[3]) ? null : Number(dm[3]);
  const agrees = sub !== null && sub.day === day && sub.month === month && (yy === null || sub.year % 100 === yy);
  if (sub && !agrees && yy !== null)
    warnings.add('local recording identification', 'its Startdate subfield disagrees with the header start date; the header date is used (content withheld)');
  if (yy === null && !agrees)
    throw new EdfFormatError(file, 'start date', 'yy', 'year written "yy" and no EDF+ Startdate subfield of the same day and month: no year');
  const year = agrees ? sub.year : yy! >= 85 ? 1900 + yy! : 2000 + yy!;
  const daysInMonth = [31, year % 4 === 0 && (year % 100 !== 0 || year % 400 === 0) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
  if (month < 1 || month > 12 || day < 1 || day > daysInMonth[month - 1]) {
    throw new EdfFormatError(file, 'start date', date, `"${date}" is not a calendar date`);
  }
  const time = timeRaw.trim();
  const tm = /^(\d\d)\.(\d\d)\.(\d\d)$/.exec(time);
  if (!tm) throw new EdfFormatError(file, 'start time', safeValue(time), `${quoteValue(time)} is not a time of the form hh.mm.ss`);
  const [h, m, s] = [Number(tm[1]), Number(tm[2]), Number(tm[3])];
  if (h > 23 || m > 59 || s > 59) throw new EdfFormatError(file, 'start time', time, `"${time}" is not a time of day`);
  const p2 = (x: number) => String(x).padStart(2, '0');
  return `${year}-${p2(month)}-${p2(day)}T${p2(h)}:${p2(m)}:${p2(s)}`;
}

/**
 * Variant from the version field (EDF "0", BDF 0xFF "BIOSEMI") and the reserved field (EDF+ 2003
 * §2.1.3.1: "EDF+C"/"EDF+D"; BDF: "24BIT", BDF+ "BDF+C"/"BDF+D"). Neither field is quoted
 * whole: the version field of a file that is not EDF can be any text.
 */
function parseVariant(file: string, version: string, reserved: string, warnings: WarningList): EdfVariant {
  const isBdf = version === BDF_VERSION;
  if (!isBdf && version.trim() !== '0') {
    throw new EdfFormatError(file, 'version', WITHHELD, `is neither "0" (EDF) nor byte FF and "BIOSEMI" (BDF): not an EDF or BDF file (${WITHHELD})`);
  }
  const family = isBdf ? 'BDF' : 'EDF';
  const mark = reserved.slice(0, 5);
  if (mark === `${family}+C` || mark === `${family}+D`) return mark as EdfVariant;
  if (mark.startsWith(`${family}+`)) {
    throw new EdfFormatError(file, 'reserved', showValue(mark), `starts with "${showValue(mark)}", which is neither ${family}+C nor ${family}+D`);
  }
  const other = isBdf ? 'EDF' : 'BDF';
  if (mark.startsWith(`${other}+`) || (!isBdf && mark === '24BIT')) {
    throw new EdfFormatError(
      file,
      'reserved',
      showValue(mark),
      `starts with "${showValue(mark)}", a mark of ${other} files, but the version field is that of ${family}`,
    );
  }
  // BDF (BioSemi): reserved "24BIT"; other text is accepted as plain BDF.
  if (isBdf && mark !== '24BIT') warnings.add('reserved', 'a BDF file should have "24BIT" here; read as plain BDF (content withheld)');
  return family;
}

/**
 * Parses and validates the header. `bytes` must start at file offset 0 and hold at least the
 * whole header (256 + 256·ns bytes) when the file is that long; `fileSizeBytes` is the size of
 * the whole file, used to check (or derive) the number of data records.
 * Throws EdfFormatError for every violation; never returns or quotes identification text.
 */
export function parseEdfHeader(bytes: Uint8Array, file: string, fileSizeBytes: number): EdfHeader {
  const warnings = new WarningList();
  const available = Math.min(bytes.length, fileSizeBytes);
  if (available < FIXED_HEADER_BYTES) {
    throw new EdfFormatError(file, 'file', String(available), `file is truncated: ${available} bytes, shorter than the 256-byte fixed EDF header`);
  }
  const c = new HeaderCursor(bytes, file);

  // EDF 1992 §2.1: version "0" (8 bytes); BDF: 0xFF "BIOSEMI".
  const version = c.take(8);
  const reservedAt = 8 + 80 + 80 + 8 + 8 + 8;
  const reserved = latin1(bytes, reservedAt, 44);
  const variant = parseVariant(file, version, reserved, warnings);
  const isPlus = isPlusVariant(variant);
  const bytesPerSample = variant.startsWith('BDF') ? 3 : 2;
  const annotationLabel = bytesPerSample === 3 ? BDF_ANNOTATION_LABEL : ANNOTATION_LABEL;
  // EDF 1992 §2.2: 16-bit two's complement samples; BDF: 24-bit.
  const [digitalLow, digitalHigh] = bytesPerSample === 3 ? [-8388608, 8388607] : [-32768, 32767];
  if (!isPlus && !isPrintableAscii(reserved)) warnings.add('reserved', 'holds bytes outside printable ASCII (content withheld)');

  // EDF 1992 §2.1: local patient / recording identification, 80 bytes each — validated, then dropped.
  checkIdentification('local patient identification', c.take(80), isPlus, warnings);
  const recording = c.take(80);
  checkIdentification('local recording identification', recording, isPlus, warnings);

  const startDate = parseStart(file, c.take(8), c.take(8), isPlus ? startdateSubfield(recording) : null, warnings);

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
  if (/[eE]/.test(durRaw))
    warnings.add('duration of a data record', `written with an exponent ("${durRaw.trim()}"; EDF+ asks for plain decimals); read as ${recordDurationS} s`);
  // EDF 1992 §2.1: number of signals ns (4).
  const ns = c.integer('number of signals', c.take(4));
  if (ns <= 0) throw new EdfFormatError(file, 'number of signals', String(ns), `number of signals ${ns} is not positive: a file needs at least one signal`);

  // EDF 1992 §2.1: header bytes = 256 + 256·ns.
  const expectedHeader = FIXED_HEADER_BYTES + BYTES_PER_SIGNAL_HEADER * ns;
  if (headerBytes !== expectedHeader) {
    throw new EdfFormatError(
      file,
      'number of bytes in header',
      String(headerBytes),
      `number of bytes in header ${headerBytes} disagrees with 256 + 256·${ns} signals = ${expectedHeader}`,
    );
  }
  if (available < headerBytes) {
    throw new EdfFormatError(file, 'file', String(available), `file is truncated: ${available} bytes, shorter than its ${headerBytes}-byte header`);
  }

  // EDF 1992 §2.1: each per-signal field is stored ns times in a row.
  const raw: string[][] = SIGNAL_FIELDS.map(([, width]) => Array.from({ length: ns }, () => c.take(width)));
  const [labels, transducers, dims, pmins, pmaxs, dmins, dmaxs, prefilters, sprs, signalReserved] = raw;
  const signals: EdfSignal[] = [];
  for (let i = 0; i < ns; i++) {
    const label = labels[i].trim();
    const place = { signal: { index: i, label } };
    const physicalMin = c.decimal('physical minimum', pmins[i], place);
    const physicalMax = c.decimal('physical maximum', pmaxs[i], place);
    const digitalMin = c.integer('digital minimum', dmins[i], place);
    const digitalMax = c.integer('digital maximum', dmaxs[i], place);
    const samplesPerRecord = c.integer('number of samples in each data record', sprs[i], place);
    for (const [field, v] of [
      ['digital minimum', digitalMin],
      ['digital maximum', digitalMax],
    ] as const) {
      if (v < digitalLow || v > digitalHigh) {
        throw new EdfFormatError(
          file,
          field,
          String(v),
          `${field} ${v} is outside the ${8 * bytesPerSample}-bit range ${digitalLow}..${digitalHigh} of ${variant}`,
          place,
        );
      }
    }
    // EDF+ 2003 §2.1.3.5: digital maximum must exceed digital minimum.
    if (digitalMin >= digitalMax) {
      throw new EdfFormatError(file, 'digital minimum', String(digitalMin), `digital minimum ${digitalMin} is not below digital maximum ${digitalMax}`, place);
    }
    // EDF+ 2003 §2.1.3.5: physical maximum differs from physical minimum (pmax < pmin is a negative gain).
    if (physicalMin === physicalMax) {
      throw new EdfFormatError(
        file,
        'physical minimum',
        pmins[i].trim(),
        `physical minimum ${pmins[i].trim()} equals physical maximum ${pmaxs[i].trim()}`,
        place,
      );
    }
    if (samplesPerRecord <= 0) {
      throw new EdfFormatError(
        file,
        'number of samples in each data record',
        String(samplesPerRecord),
        `number of samples in each data record ${samplesPerRecord} is not positive`,
        place,
      );
    }
    for (const [field, rawValue] of [
      ['physical minimum', pmins[i]],
      ['physical maximum', pmaxs[i]],
    ] as const) {
      if (/[eE]/.test(rawValue)) warnings.signal(field, i, 'written with an exponent (EDF+ asks for plain decimals); read as a number');
    }
    // EDF 1992 §2.1: header text is printable ASCII; other bytes are kept as Latin-1, never quoted.
    if (!isPrintableAscii(labels[i])) warnings.signal('label', i, 'holds bytes outside printable ASCII; read as Latin-1');
    for (const [field, rawValue] of [
      ['transducer type', transducers[i]],
      ['prefiltering', prefilters[i]],
      ['reserved', signalReserved[i]],
    ] as const) {
      if (!isPrintableAscii(rawValue)) warnings.signal(field, i, 'holds bytes outside printable ASCII (content withheld)');
    }
    // EDF+ 2003 §2.2.1: the annotation signal is labelled exactly "EDF Annotations" (BDF+: "BDF Annotations").
    const isAnnotation = label === annotationLabel;
    if (isAnnotation && !isPlus) warnings.signal('label', i, `labelled "${annotationLabel}" in a plain ${variant} file; read as an annotation signal`);
    const gain = (physicalMax - physicalMin) / (digitalMax - digitalMin);
    signals.push({
      index: i,
      label,
      transducer: transducers[i].trim(),
      physicalDimension: physicalDimension(dims[i], i, warnings),
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
    throw new EdfFormatError(
      file,
      'duration of a data record',
      durRaw.trim(),
      `record duration ${durRaw.trim()} s is not positive although the file has ordinary signals`,
    );
  }
  if (variant.endsWith('+D') && nAnnotation === 0) {
    throw new EdfFormatError(file, 'reserved', variant, `a ${variant} file needs a signal labelled "${annotationLabel}" for its record onsets, none found`);
  }
  if (variant.endsWith('+C') && nAnnotation === 0)
    warnings.add('reserved', `${variant} file without a signal labelled "${annotationLabel}"; record onsets taken as k·duration`);

  // EDF 1992 §2.1/§2.2: the data records follow the header back to back; −1 records = unknown.
  const perRecord = recordBytes(signals, bytesPerSample);
  const dataBytes = fileSizeBytes - headerBytes;
  const whole = Math.floor(dataBytes / perRecord);
  const rest = dataBytes - whole * perRecord;
  const declared = nRecords;
  if (declared !== -1 && declared !== whole && !(declared === whole + 1 && rest > 0)) {
    throw new EdfFormatError(
      file,
      'number of data records',
      String(declared),
      `number of data records ${declared} disagrees with the file size: ${dataBytes} data bytes hold ${whole} records of ${perRecord} bytes`,
    );
  }
  nRecords = whole;
  if (declared === -1) warnings.add('number of data records', `number of data records is -1 (unknown); ${whole} records derived from the file size`);
  if (rest > 0 && declared === whole) {
    warnings.add('file', `${rest} bytes after the last data record (less than one ${perRecord}-byte record) are ignored`);
  } else if (rest > 0) {
    // a count one beyond the whole records, or an unknown count: the recording stopped inside its last record
    warnings.add('file', `the last data record is incomplete (${rest} of ${perRecord} bytes) and is ignored`);
  }

  return { variant, bytesPerSample, startDate, headerBytes, nRecords, recordDurationS, signals, warnings: warnings.done() };
}
