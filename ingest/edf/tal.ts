// Time-stamped annotation lists (TALs) of the "EDF Annotations" signal (BDF+: "BDF Annotations",
// the same bytes in 3-byte samples), EDF+ 2003 §2.2.2:
//   +Onset\x15Duration\x14Text1\x14Text2\x14\x00   (duration and its \x15 optional)
// TALs never cross a data record; the record's tail after the last TAL is \x00 (§2.2.4).
import { EdfFormatError, WITHHELD, type EdfErrorPlace } from './errors.ts';

export interface EdfAnnotation {
  /** Seconds from the file's start date/time (may be negative, EDF+ §2.2.2). */
  onsetS: number;
  durationS: number | null;
  texts: string[];
}

/** One parsed TAL. */
export interface Tal {
  onsetS: number;
  durationS: number | null;
  texts: string[];
}

const ONSET = /^[+-]\d+(\.\d*)?$/; // EDF+ §2.2.2: sign required, then digits and an optional dot
const DURATION = /^\d+(\.\d*)?$/; // EDF+ §2.2.2: no sign
const utf8 = new TextDecoder('utf-8', { fatal: true });

function ascii(bytes: Uint8Array, start: number, end: number): string {
  let s = '';
  for (let i = start; i < end; i++) s += String.fromCharCode(bytes[i]);
  return s;
}

/**
 * Parses the TALs of one record's annotation bytes. `record` (0-based) and `signal` only serve
 * the error message, which names the list by its position (record, TAL number) and its onset
 * once that is known to be a number: it never quotes annotation text, nor an onset or duration
 * field that is not a number (free text may sit there in a broken list).
 */
export function parseTals(bytes: Uint8Array, file: string, record: number, signal: { index: number; label: string }): Tal[] {
  const place = { record, signal };
  const tals: Tal[] = [];
  const n = bytes.length;
  let pos = 0;
  while (pos < n && bytes[pos] !== 0) {
    // Onset runs up to \x15 (duration follows) or \x14 (texts follow).
    let i = pos;
    while (i < n && bytes[i] !== 0x14 && bytes[i] !== 0x15 && bytes[i] !== 0) i++;
    const onsetText = ascii(bytes, pos, i);
    const k = tals.length + 1;
    if (!ONSET.test(onsetText)) {
      const tail = i >= n ? ' and runs to the end of the record' : '';
      throw talError(file, place, `TAL ${k}`, `TAL ${k}: the onset (${i - pos} bytes, ${WITHHELD}) is not a signed number (only + - . 0-9 allowed)${tail}`);
    }
    if (i >= n) throw talError(file, place, onsetText, `TAL ${k} at onset ${onsetText}: runs past the end of the record (TALs must not cross records)`);
    if (bytes[i] === 0) throw talError(file, place, onsetText, `TAL ${k} at onset ${onsetText}: the onset is not followed by \\x14`);
    let durationS: number | null = null;
    if (bytes[i] === 0x15) {
      const start = i + 1;
      i = start;
      while (i < n && bytes[i] !== 0x14 && bytes[i] !== 0x15 && bytes[i] !== 0) i++;
      const durText = ascii(bytes, start, i);
      if (!DURATION.test(durText)) {
        throw talError(
          file,
          place,
          onsetText,
          `TAL ${k} at onset ${onsetText}: the duration (${i - start} bytes, ${WITHHELD}) is not an unsigned number (only . 0-9 allowed)`,
        );
      }
      if (i >= n) throw talError(file, place, onsetText, `TAL ${k} at onset ${onsetText}: runs past the end of the record (TALs must not cross records)`);
      if (bytes[i] !== 0x14) throw talError(file, place, onsetText, `TAL ${k} at onset ${onsetText}: the duration is not followed by \\x14`);
      durationS = Number(durText);
    }
    i++; // past the \x14 after onset/duration
    // Texts, each closed by \x14; the TAL ends with \x00 after the last \x14.
    const texts: string[] = [];
    for (;;) {
      if (i >= n) throw talError(file, place, onsetText, `TAL ${k} at onset ${onsetText}: runs past the end of the record (TALs must not cross records)`);
      if (bytes[i] === 0) break;
      const start = i;
      while (i < n && bytes[i] !== 0x14 && bytes[i] !== 0) i++;
      if (i >= n || bytes[i] === 0) {
        throw talError(file, place, onsetText, `TAL ${k} at onset ${onsetText}: text ${texts.length + 1} is not closed by \\x14 before the end of the list`);
      }
      try {
        texts.push(utf8.decode(bytes.subarray(start, i)));
      } catch (cause) {
        throw talError(file, place, onsetText, `TAL ${k} at onset ${onsetText}: text ${texts.length + 1} is not valid UTF-8 (${WITHHELD})`, cause);
      }
      i++;
    }
    tals.push({ onsetS: Number(onsetText), durationS, texts });
    pos = i + 1; // past the closing \x00
  }
  return tals;
}

/** The error of a broken TAL; `value` is the onset when it is a number, else the TAL's position. */
function talError(file: string, place: EdfErrorPlace, value: string, detail: string, cause?: unknown): EdfFormatError {
  return new EdfFormatError(file, 'annotations', value, detail, place, cause === undefined ? undefined : { cause });
}

/** Formats seconds for a TAL: optional sign, digits, dot, at most 7 decimals (100 ns), no exponent. */
export function formatTalSeconds(x: number, signed: boolean): string {
  let s = Math.abs(x).toFixed(7);
  s = s.replace(/\.?0+$/, '');
  if (s === '') s = '0';
  return signed ? `${x < 0 ? '-' : '+'}${s}` : s;
}

const utf8enc = new TextEncoder();

/** Bytes of one TAL (EDF+ §2.2.2); `texts` empty gives the time-keeping form "+t\x14\x14\x00". */
export function encodeTal(onsetS: number, durationS: number | null, texts: readonly string[]): Uint8Array {
  let head = formatTalSeconds(onsetS, true);
  if (durationS !== null) head += `\x15${formatTalSeconds(durationS, false)}`;
  const parts: Uint8Array[] = [utf8enc.encode(`${head}\x14`)];
  if (texts.length === 0) parts.push(Uint8Array.of(0x14));
  for (const t of texts) parts.push(utf8enc.encode(t), Uint8Array.of(0x14));
  parts.push(Uint8Array.of(0));
  const out = new Uint8Array(parts.reduce((a, p) => a + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}
