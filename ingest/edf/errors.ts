// Typed errors of the EDF/EDF+/BDF reader and writer. Every message names the file, the header
// field (or data record, annotation list) and the offending value, so a cohort run can report it
// per recording — except where the value could be identification or annotation free text
// (names, birth dates): such content is withheld and the place alone is named.

/** Where in the file a format problem sits: a header field, optionally of one signal or record. */
export interface EdfErrorPlace {
  /** 0-based signal index; messages count signals from 1, as the header lists them. */
  signal?: { index: number; label: string };
  /** 0-based data record index; messages count records from 1. */
  record?: number;
}

/** Shows a field value safely: control and non-ASCII bytes escaped, long values cut. */
export function showValue(value: string): string {
  const escaped = value.replace(/[^\x20-\x7e]/g, (c) => {
    const code = c.charCodeAt(0);
    return code <= 0xff ? `\\x${code.toString(16).padStart(2, '0')}` : `\\u${code.toString(16).padStart(4, '0')}`;
  });
  return escaped.length > 100 ? `${escaped.slice(0, 100)}…` : escaped;
}

/** Stands in for file content a message must not quote. */
export const WITHHELD = 'content withheld';

// Only digits, signs, dots, commas, colons, spaces and e/E: no name or word can be spelled with them.
const NUMBER_LIKE = /^[0-9+\-.,: eE]{0,24}$/;

/** A header value as it may appear in a message: quoted when number-like, else withheld. */
export function quoteValue(value: string): string {
  return NUMBER_LIKE.test(value) ? `"${value}"` : `the value (letters or other characters; ${WITHHELD})`;
}

/** The value an error carries: itself when number-like, else WITHHELD. */
export function safeValue(value: string): string {
  return NUMBER_LIKE.test(value) ? value : WITHHELD;
}

function describePlace(field: string, place: EdfErrorPlace): string {
  const parts: string[] = [];
  if (place.record !== undefined) parts.push(`data record ${place.record + 1}`);
  if (field !== 'file') {
    let f = `${place.record !== undefined ? 'field' : 'header field'} "${field}"`;
    if (place.signal) f += ` of signal ${place.signal.index + 1} ("${showValue(place.signal.label)}")`;
    parts.push(f);
  }
  return parts.join(', ');
}

/** A file that breaks the EDF (Kemp et al. 1992) or EDF+ (Kemp & Olivan 2003) rules. */
export class EdfFormatError extends Error {
  readonly file: string;
  readonly field: string;
  readonly value: string;
  readonly record?: number;
  readonly signal?: number;

  /**
   * @param detail sentence that states the rule broken; it must quote the value (the
   *   constructor does not re-insert it, so the sentence reads naturally).
   */
  constructor(file: string, field: string, value: string, detail: string, place: EdfErrorPlace = {}, options?: { cause?: unknown }) {
    const where = describePlace(field, place);
    super(`${file}: ${where ? `${where}: ` : ''}${detail}`, options);
    this.name = 'EdfFormatError';
    this.file = file;
    this.field = field;
    this.value = value;
    if (place.record !== undefined) this.record = place.record;
    if (place.signal !== undefined) this.signal = place.signal.index;
  }
}

/** The operating system refused to open, stat, read or write the file. field is always "file". */
export class EdfIoError extends Error {
  readonly file: string;
  readonly field = 'file';
  /** The system error code (ENOENT, EACCES, …) or the failing operation. */
  readonly value: string;

  constructor(file: string, operation: string, cause: unknown) {
    const code = typeof cause === 'object' && cause !== null && 'code' in cause ? String((cause as { code: unknown }).code) : 'error';
    const text = cause instanceof Error ? cause.message : String(cause);
    super(`${file}: cannot ${operation} the file (${code}): ${text}`, { cause });
    this.name = 'EdfIoError';
    this.file = file;
    this.value = code;
  }
}

/** True for the two error classes the EDF code throws on purpose. */
export function isEdfError(e: unknown): e is EdfFormatError | EdfIoError {
  return e instanceof EdfFormatError || e instanceof EdfIoError;
}
