// Digital samples of the data records to physical values (EDF 1992 §2.2 scaling), for 2-byte
// EDF samples (read through an Int16Array view, the hot loop of every ingest) and 3-byte BDF
// samples (assembled from bytes). Plain module-level functions over typed arrays, so the engine
// optimises each loop once and keeps that code for every file.
import type { EdfHeader, EdfSignal } from './header.ts';

/**
 * Where and how each requested signal is decoded, in typed arrays (one row per requested signal k):
 * its sample offset inside a record, samples per record and per epoch, scaling, and the first
 * sample of the current epoch.
 */
export class DecodePlan {
  readonly n: number;
  /** offset of signal k inside a record, in samples (EDF 1992 §2.2: signals back to back) */
  readonly sampleOffset: Int32Array;
  readonly samplesPerRecord: Int32Array;
  readonly perEpoch: Int32Array;
  readonly fsHz: Float64Array;
  readonly physicalMin: Float64Array;
  readonly digitalMin: Float64Array;
  readonly digitalMax: Float64Array;
  /** (pmax − pmin)/(dmax − dmin) */
  readonly gain: Float64Array;
  /** first sample of the current epoch, counted from the segment's first record */
  readonly startSample: Int32Array;

  constructor(header: EdfHeader, chosen: EdfSignal[], perEpoch: number[]) {
    const n = (this.n = chosen.length);
    const offsets: number[] = [];
    let acc = 0;
    for (const s of header.signals) {
      offsets.push(acc);
      acc += s.samplesPerRecord;
    }
    this.sampleOffset = Int32Array.from(chosen, (s) => offsets[s.index]);
    this.samplesPerRecord = Int32Array.from(chosen, (s) => s.samplesPerRecord);
    this.perEpoch = Int32Array.from(perEpoch);
    this.fsHz = Float64Array.from(chosen, (s) => s.fsHz);
    this.physicalMin = Float64Array.from(chosen, (s) => s.physicalMin);
    this.digitalMin = Float64Array.from(chosen, (s) => s.digitalMin);
    this.digitalMax = Float64Array.from(chosen, (s) => s.digitalMax);
    this.gain = Float64Array.from(chosen, (s) => (s.physicalMax - s.physicalMin) / (s.digitalMax - s.digitalMin));
    this.startSample = new Int32Array(n);
  }
}

/**
 * Physical values of `count` 16-bit samples src[from …] into dst[to …] (EDF 1992 §2.2 scaling:
 * phys = pmin + (dig − dmin)·(pmax − pmin)/(dmax − dmin), `gain` the last factor). Returns how
 * many were at or beyond the digital limits. A plain function, so the engine optimises the loop
 * fully (it is the inner loop of every ingest; the generator around it is not).
 */
function decodeSamples(
  src: Int16Array,
  from: number,
  dst: Float32Array,
  to: number,
  count: number,
  pmin: number,
  dmin: number,
  dmax: number,
  gain: number,
): number {
  let atLimits = 0;
  for (let i = 0; i < count; i++) {
    const v = src[from + i];
    dst[to + i] = pmin + (v - dmin) * gain;
    if (v <= dmin || v >= dmax) atLimits++;
  }
  return atLimits;
}

/**
 * The same for 24-bit BDF samples: sample `from` starts at byte 3·from of src; each is 3 bytes of
 * two's complement, least significant first (BDF, shared/STANDARDS.md), sign-extended by the shifts.
 */
function decodeSamples24(
  src: Uint8Array,
  from: number,
  dst: Float32Array,
  to: number,
  count: number,
  pmin: number,
  dmin: number,
  dmax: number,
  gain: number,
): number {
  let atLimits = 0;
  for (let i = 0, b = 3 * from; i < count; i++, b += 3) {
    // dig = b0 + 256·b1 + 65536·b2, minus 2^24 when bit 23 is set
    const v = ((src[b] | (src[b + 1] << 8) | (src[b + 2] << 16)) << 8) >> 8;
    dst[to + i] = pmin + (v - dmin) * gain;
    if (v <= dmin || v >= dmax) atLimits++;
  }
  return atLimits;
}

/**
 * Record rr of the current segment (its samples from recBase in chunk) into the epoch buffers: for
 * each requested signal k, the samples of the epoch (p.startSample[k], p.perEpoch[k] of them) that
 * fall in this record. A plain function, so its optimised code outlives one generator's run.
 */
export function decodeRecord(chunk: Int16Array, recBase: number, rr: number, p: DecodePlan, out: Float32Array[], limits: Int32Array): void {
  for (let k = 0; k < p.n; k++) {
    const spr = p.samplesPerRecord[k];
    const first = p.startSample[k];
    const from = Math.max(first, rr * spr);
    const to = Math.min(first + p.perEpoch[k], (rr + 1) * spr);
    if (from >= to) continue;
    limits[k] += decodeSamples(
      chunk,
      recBase + p.sampleOffset[k] + (from - rr * spr),
      out[k],
      from - first,
      to - from,
      p.physicalMin[k],
      p.digitalMin[k],
      p.digitalMax[k],
      p.gain[k],
    );
  }
}

/** decodeRecord for BDF: chunk holds the bytes, recBase counts 3-byte samples. */
export function decodeRecord24(chunk: Uint8Array, recBase: number, rr: number, p: DecodePlan, out: Float32Array[], limits: Int32Array): void {
  for (let k = 0; k < p.n; k++) {
    const spr = p.samplesPerRecord[k];
    const first = p.startSample[k];
    const from = Math.max(first, rr * spr);
    const to = Math.min(first + p.perEpoch[k], (rr + 1) * spr);
    if (from >= to) continue;
    limits[k] += decodeSamples24(
      chunk,
      recBase + p.sampleOffset[k] + (from - rr * spr),
      out[k],
      from - first,
      to - from,
      p.physicalMin[k],
      p.digitalMin[k],
      p.digitalMax[k],
      p.gain[k],
    );
  }
}
