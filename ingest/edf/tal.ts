// Time-stamped annotation lists (TALs) of the "EDF Annotations" signal, EDF+ 2003 §2.2.2:
//   +Onset\x15Duration\x14Text1\x14Text2\x14\x00   (duration and its \x15 optional)
// TALs never cross a data record; the record's tail after the last TAL is \x00 (§2.2.4).
import { EdfFormatError, showValue } from './errors.ts';

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
 * Parses the TALs of one record's annotation bytes. `record` (0-based) and `signalLabel` only
 * serve the error message.
 */
export function parseTals(bytes: Uint8Array, file: string, record: number, signal: { index: number; label: string }): Tal[] {
  const place = { record, signal };
  const fail = (value: string, detail: string): never => {
    throw new EdfFormatError(file, 'annotations', value, detail, place);
  };
  const tals: Tal[] = [];
  const n = bytes.length;
  let pos = 0;
  while (pos < n && bytes[pos] !== 0) {
    // Onset runs up to \x15 (duration follows) or \x14 (texts follow).
    let i = pos;
    while (i < n && bytes[i] !== 0x14 && bytes[i] !== 0x15 && bytes[i] !== 0) i++;
    const onsetText = ascii(bytes, pos, i);
    if (i >= n) fail(onsetText, `annotation list "${showValue(onsetText)}" runs past the end of the record (TALs must not cross records)`);
    if (bytes[i] === 0) fail(onsetText, `annotation onset "${showValue(onsetText)}" is not followed by \\x14`);
    if (!ONSET.test(onsetText)) fail(onsetText, `annotation onset "${showValue(onsetText)}" is not a signed number (only + - . 0-9 allowed)`);
    let durationS: number | null = null;
    if (bytes[i] === 0x15) {
      const start = i + 1;
      i = start;
      while (i < n && bytes[i] !== 0x14 && bytes[i] !== 0x15 && bytes[i] !== 0) i++;
      const durText = ascii(bytes, start, i);
      if (i >= n) fail(durText, `annotation list with duration "${showValue(durText)}" runs past the end of the record (TALs must not cross records)`);
      if (bytes[i] !== 0x14) fail(durText, `annotation duration "${showValue(durText)}" is not followed by \\x14`);
      if (!DURATION.test(durText)) fail(durText, `annotation duration "${showValue(durText)}" is not an unsigned number (only . 0-9 allowed)`);
      durationS = Number(durText);
    }
    i++; // past the \x14 after onset/duration
    // Texts, each closed by \x14; the TAL ends with \x00 after the last \x14.
    const texts: string[] = [];
    for (;;) {
      if (i >= n) fail(onsetText, `annotation list at onset ${onsetText} runs past the end of the record (TALs must not cross records)`);
      if (bytes[i] === 0) break;
      const start = i;
      while (i < n && bytes[i] !== 0x14 && bytes[i] !== 0) i++;
      if (i >= n || bytes[i] === 0) {
        fail(onsetText, `annotation text at onset ${onsetText} is not closed by \\x14 before the end of the list`);
      }
      try {
        texts.push(utf8.decode(bytes.subarray(start, i)));
      } catch (cause) {
        throw new EdfFormatError(file, 'annotations', onsetText, `annotation text at onset ${onsetText} is not valid UTF-8`, place, { cause });
      }
      i++;
    }
    tals.push({ onsetS: Number(onsetText), durationS, texts });
    pos = i + 1; // past the closing \x00
  }
  return tals;
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
