// Parse an HTTP Range header for one resource (RFC 9110 §14.1–14.2, byte ranges).
// Only a single range is accepted; a list of ranges, another unit or bad syntax is refused,
// so a large database file is never streamed whole by accident.

/** Inclusive byte range [start, end] of a resource. */
export interface ByteRange {
  start: number;
  end: number;
}

export type RangeResult = { kind: 'none' } | { kind: 'single'; range: ByteRange } | { kind: 'unsatisfiable'; reason: string };

const SINGLE_RANGE = /^bytes=(\d*)-(\d*)$/;

/** Interpret `header` (the Range value, or undefined) against a resource of `size` bytes. */
export function parseRange(header: string | undefined, size: number): RangeResult {
  if (header === undefined) return { kind: 'none' };
  const value = header.trim();
  if (value.includes(',')) return { kind: 'unsatisfiable', reason: 'multiple ranges are not served' };
  const m = SINGLE_RANGE.exec(value);
  if (m === null) return { kind: 'unsatisfiable', reason: `unsupported Range: ${JSON.stringify(header)}` };
  const [, first, last] = m;
  if (first === '' && last === '') return { kind: 'unsatisfiable', reason: 'empty range' };
  if (first === '') {
    // suffix range: the last N bytes (RFC 9110 §14.1.1)
    const n = Number(last);
    if (n === 0 || size === 0) return { kind: 'unsatisfiable', reason: 'empty suffix range' };
    return { kind: 'single', range: { start: Math.max(0, size - n), end: size - 1 } };
  }
  const start = Number(first);
  if (!Number.isSafeInteger(start) || start >= size) {
    return { kind: 'unsatisfiable', reason: `range start ${first} beyond size ${size}` };
  }
  const end = last === '' ? size - 1 : Math.min(Number(last), size - 1);
  if (!Number.isSafeInteger(end) || end < start) {
    return { kind: 'unsatisfiable', reason: `range end ${last} before start ${first}` };
  }
  return { kind: 'single', range: { start, end } };
}
