/**
 * Clock times of EDF/EDF+/BDF+ files. The header holds a local start date and time without zone
 * (EDF 1992: dd.mm.yy, hh.mm.ss; the reader gives 'YYYY-MM-DDTHH:MM:SS'); EDF+ adds the sub-second
 * part as the onset of the first data record's time-keeping TAL (Kemp & Olivan 2003). Two files
 * of one night share that local clock, so their starts are compared as plain seconds (counted as
 * if the clock were UTC; a daylight-saving change between the two starts is not known).
 */
import type { EdfFile } from '../edf/reader.ts';

/** Seconds since 1970-01-01 00:00:00 of a 'YYYY-MM-DDTHH:MM:SS' clock time. */
export function clockSeconds(startDate: string): number {
  const m = /^(\d{4})-(\d\d)-(\d\d)T(\d\d):(\d\d):(\d\d)$/.exec(startDate);
  if (!m) throw new RangeError(`start date '${startDate}' is not of the form YYYY-MM-DDTHH:MM:SS`);
  const [y, mo, d, h, mi, s] = m.slice(1).map(Number);
  return Date.UTC(y, mo - 1, d, h, mi, s) / 1000;
}

/** The file's start: header start date/time + the first record's time-keeping onset (EDF+ 2003). */
export function edfStartSeconds(edf: EdfFile): number {
  return clockSeconds(edf.header.startDate) + (edf.recordOnsetsS.length ? edf.recordOnsetsS[0] : 0);
}

/** 'YYYY-MM-DD HH:MM:SS' with a decimal fraction when there is one (to 0.1 ms): dates and times only. */
export function formatClock(seconds: number): string {
  const tenths = Math.round(seconds * 1e4); // units of 100 µs
  const whole = Math.floor(tenths / 1e4);
  const frac = tenths - whole * 1e4;
  const text = new Date(whole * 1000).toISOString().slice(0, 19).replace('T', ' ');
  return frac === 0 ? text : `${text}.${String(frac).padStart(4, '0').replace(/0+$/, '')}`;
}
