// Streaming EDF/EDF+ and BDF/BDF+ reader (Kemp et al. 1992; Kemp & Olivan 2003; BDF: 24-bit
// samples, shared/STANDARDS.md). Opens a file, parses and validates its header, makes one pass
// over the annotation signal (annotation-pass.ts), and then hands out whole epochs of physical
// samples, reading the data records in chunks through one FileHandle so memory stays bounded
// whatever the file size. On request it also hashes the file (SHA-256), in the annotation pass's
// own reads when that pass reads every byte. What it accepts with a compromise (a derived record
// count, ignored bytes, gaps, snapped segment onsets) it lists in EdfFile.warnings.
import { createHash } from 'node:crypto';
import { open, type FileHandle } from 'node:fs/promises';
import { endianness } from 'node:os';
import { DEFAULT_CHUNK_BYTES, readAnnotationSignals } from './annotation-pass.ts';
import { DecodePlan, decodeRecord, decodeRecord24 } from './decode.ts';
import { EdfFormatError, EdfIoError, isEdfError } from './errors.ts';
import { parseEdfHeader, recordBytes, FIXED_HEADER_BYTES, BYTES_PER_SIGNAL_HEADER, type EdfHeader, type EdfSignal, type EdfWarning } from './header.ts';
import { readFully } from './read-fully.ts';
import type { EdfAnnotation } from './tal.ts';
import { hashRestOfFile } from '../file-sha256.ts';

export type { EdfAnnotation } from './tal.ts';
export type { EdfHeader, EdfSignal, EdfVariant, EdfWarning } from './header.ts';

/** Time differences below this are not gaps or overlaps: 100 µs, the annotation time resolution of EDFlib (common practice). */
export const ONSET_TOLERANCE_S = 1e-4;

export interface EdfGap {
  /** 0-based index of the record after which the gap starts. */
  afterRecord: number;
  /** Seconds from the file start: end of record `afterRecord` … onset of the next record. */
  startS: number;
  endS: number;
}

export interface EpochBlock {
  /** Index on the grid t = epoch·epochS counted from the first record's onset. */
  epoch: number;
  /** Epoch start in seconds from the file's start date/time. */
  onsetS: number;
  /**
   * Physical samples (units of each signal's physical dimension), one Float32Array per
   * requested signal, fsHz·epochS long. The SAME arrays are refilled for the next epoch:
   * copy them if you keep them past the next iteration. null when dropReason is set.
   */
  data: Float32Array[] | null;
  /**
   * Per requested signal, the samples of this epoch at or beyond the digital minimum or maximum
   * (the amplifier or converter range was reached: clipping). Refilled like data; null with it.
   */
  atDigitalLimits: Int32Array | null;
  /** 'gap': the epoch touches an EDF+D gap (never joined); 'end': the last, partial epoch. */
  dropReason: null | 'gap' | 'end';
}

export interface ReadEpochsOptions {
  /** Indices into header.signals (ordinary signals only). */
  signals: number[];
  /** Epoch length in seconds; epochS·fsHz must be a whole number for every requested signal. */
  epochS: number;
  /** Bytes of data records read per positioned read (default 4 MiB, at least one record). */
  chunkBytes?: number;
}

export interface EdfFile {
  /** The path as given to openEdf. */
  file: string;
  header: EdfHeader;
  /** All TALs except the time-keeping ones, in file order; empty texts are dropped. */
  annotations: EdfAnnotation[];
  /** Onset of every data record in seconds from the file start. */
  recordOnsetsS: Float64Array;
  gaps: EdfGap[];
  /** From the first record's onset to the end of the last record, gaps included (s). */
  durationS: number;
  /** SHA-256 (hex) of the file bytes when opened with { sha256: true }, else null. */
  sha256: string | null;
  /** header.warnings, then the reader's own (gaps, segment onsets off the sample grid). */
  warnings: EdfWarning[];
  readEpochs(opts: ReadEpochsOptions): AsyncGenerator<EpochBlock>;
  close(): Promise<void>;
}

/** Wraps anything unexpected so no raw exception leaves the reader. */
function wrapUnexpected(file: string, e: unknown): Error {
  if (isEdfError(e)) return e;
  if (typeof e === 'object' && e !== null && 'code' in e) return new EdfIoError(file, 'read', e);
  return new EdfFormatError(file, 'file', String(e), `unexpected failure while reading: ${e instanceof Error ? e.message : String(e)}`, {}, { cause: e });
}

/** Record onsets and gaps: k·duration for EDF, checked for EDF+C, from the time-keeping TALs for EDF+D (BDF the same). */
function recordTiming(file: string, header: EdfHeader, timeKeeping: Float64Array | null): { onsets: Float64Array; gaps: EdfGap[] } {
  const n = header.nRecords;
  const d = header.recordDurationS;
  const onsets = new Float64Array(n);
  const gaps: EdfGap[] = [];
  if (!header.variant.endsWith('+D')) {
    const t0 = timeKeeping ? timeKeeping[0] : 0;
    for (let k = 0; k < n; k++) {
      onsets[k] = t0 + k * d;
      // EDF+ 2003 §2.1.3.1: in EDF+C every record starts where the previous one ended.
      if (timeKeeping && Math.abs(timeKeeping[k] - onsets[k]) > ONSET_TOLERANCE_S) {
        throw new EdfFormatError(
          file,
          'annotations',
          String(timeKeeping[k]),
          `time-keeping onset ${timeKeeping[k]} s breaks the contiguity of an ${header.variant} file (expected ${onsets[k]} s)`,
          { record: k },
        );
      }
    }
    return { onsets, gaps };
  }
  // EDF+D (EDF+ 2003 §2.1.3.1, §2.2.4): onsets from the time-keeping TALs, increasing, records may not overlap.
  const tk = timeKeeping as Float64Array;
  for (let k = 0; k < n; k++) {
    onsets[k] = tk[k];
    if (k === 0) continue;
    const prevEnd = tk[k - 1] + d;
    if (tk[k] < prevEnd - ONSET_TOLERANCE_S) {
      throw new EdfFormatError(
        file,
        'annotations',
        String(tk[k]),
        `time-keeping onset ${tk[k]} s is before the end of the previous record (${prevEnd} s): records overlap`,
        { record: k },
      );
    }
    if (tk[k] > prevEnd + ONSET_TOLERANCE_S) gaps.push({ afterRecord: k - 1, startS: prevEnd, endS: tk[k] });
  }
  return { onsets, gaps };
}

/** Samples closer to the grid than this (in samples) are on it: float rounding of decimal onsets. */
const ON_GRID_SAMPLES = 1e-6;

/** Warnings about EDF+D timing: the gaps (count, total seconds), and segments whose onset is off the first segment's sample grid. */
function timingWarnings(header: EdfHeader, onsets: Float64Array, gaps: EdfGap[]): EdfWarning[] {
  if (gaps.length === 0) return [];
  let totalS = 0;
  for (const g of gaps) totalS += g.endS - g.startS;
  const warnings: EdfWarning[] = [
    {
      field: 'annotations',
      message: `${gaps.length} gap${gaps.length === 1 ? '' : 's'} between data records, ${Number(totalS.toFixed(4))} s in total; epochs that touch a gap are dropped`,
    },
  ];
  // readEpochs reads an epoch from sample round((epoch onset − segment onset)·fs): off the grid, that snaps by up to half a sample
  let offGrid = 0;
  let worstS = 0;
  for (const g of gaps) {
    const dt = onsets[g.afterRecord + 1] - onsets[0];
    let worst = 0;
    for (const s of header.signals) {
      if (s.isAnnotation || !(s.fsHz > 0)) continue;
      const off = Math.abs(dt * s.fsHz - Math.round(dt * s.fsHz));
      if (off > ON_GRID_SAMPLES) worst = Math.max(worst, off / s.fsHz);
    }
    if (worst > 0) offGrid++;
    worstS = Math.max(worstS, worst);
  }
  if (offGrid > 0) {
    warnings.push({
      field: 'annotations',
      message: `${offGrid} of ${gaps.length} segments after a gap start off the sample grid of the first record (by up to ${Number((worstS * 1000).toFixed(3))} ms); their epochs are read from the nearest sample`,
    });
  }
  return warnings;
}

export interface OpenEdfOptions {
  /** Hash the file bytes too (EdfFile.sha256). */
  sha256?: boolean;
}

/** Opens an EDF/EDF+ or BDF/BDF+ file. Throws EdfFormatError or EdfIoError, nothing else. */
export async function openEdf(path: string, options: OpenEdfOptions = {}): Promise<EdfFile> {
  if (endianness() !== 'LE')
    throw new EdfIoError(path, 'decode', new Error('this reader decodes 16-bit samples with the host byte order and needs a little-endian host'));
  let fh: FileHandle;
  try {
    fh = await open(path, 'r');
  } catch (cause) {
    throw new EdfIoError(path, 'open', cause);
  }
  try {
    let size: number;
    try {
      size = (await fh.stat()).size;
    } catch (cause) {
      throw new EdfIoError(path, 'stat', cause);
    }
    const fixed = new Uint8Array(Math.min(size, FIXED_HEADER_BYTES));
    await readFully(fh, path, fixed, fixed.length, 0);
    let headerBuf = fixed;
    // EDF 1992 §2.1: the signal count (bytes 252..255) gives the full header length 256 + 256·ns.
    const ns = fixed.length === FIXED_HEADER_BYTES ? Number(String.fromCharCode(...fixed.subarray(252, 256)).trim()) : NaN;
    if (Number.isInteger(ns) && ns > 0) {
      const want = Math.min(size, FIXED_HEADER_BYTES + BYTES_PER_SIGNAL_HEADER * ns);
      headerBuf = new Uint8Array(want);
      await readFully(fh, path, headerBuf, want, 0);
    }
    const header = parseEdfHeader(headerBuf, path, size);
    // the header and then the records as the annotation pass reads them: the file's bytes in order
    const hash = options.sha256 && headerBuf.length === header.headerBytes ? createHash('sha256').update(headerBuf) : null;
    const { annotations, timeKeeping, hashed } = await readAnnotationSignals(fh, path, header, hash);
    let sha256: string | null = null;
    if (options.sha256) {
      // any bytes after the last record, or the whole file in a pass of its own when the annotation pass read only parts
      const whole = hash && hashed ? hash : createHash('sha256');
      await hashRestOfFile(fh, whole, whole === hash ? header.headerBytes + header.nRecords * recordBytes(header.signals, header.bytesPerSample) : 0);
      sha256 = whole.digest('hex');
    }
    const { onsets, gaps } = recordTiming(path, header, timeKeeping);
    const n = header.nRecords;
    const durationS = n === 0 ? 0 : onsets[n - 1] + header.recordDurationS - onsets[0];
    const handle = fh;
    let closed = false;
    return {
      file: path,
      header,
      annotations,
      recordOnsetsS: onsets,
      gaps,
      durationS,
      sha256,
      warnings: [...header.warnings, ...timingWarnings(header, onsets, gaps)],
      readEpochs: (opts) => guarded(path, readEpochs(handle, path, header, onsets, gaps, opts)),
      async close() {
        if (closed) return;
        closed = true;
        try {
          await handle.close();
        } catch (cause) {
          throw new EdfIoError(path, 'close', cause);
        }
      },
    };
  } catch (e) {
    await fh.close().catch(() => undefined);
    throw wrapUnexpected(path, e);
  }
}

/** Passes the blocks through and turns any stray exception into a typed one. */
async function* guarded(file: string, inner: AsyncGenerator<EpochBlock>): AsyncGenerator<EpochBlock> {
  try {
    yield* inner;
  } catch (e) {
    throw wrapUnexpected(file, e);
  }
}

interface Segment {
  firstRecord: number;
  nRecords: number;
  startS: number;
}

/** Runs of contiguous records between gaps. */
function segmentsOf(onsets: Float64Array, gaps: EdfGap[]): Segment[] {
  const segs: Segment[] = [];
  let first = 0;
  for (const g of gaps) {
    segs.push({ firstRecord: first, nRecords: g.afterRecord + 1 - first, startS: onsets[first] });
    first = g.afterRecord + 1;
  }
  segs.push({ firstRecord: first, nRecords: onsets.length - first, startS: onsets[first] });
  return segs;
}

function checkEpochOptions(file: string, header: EdfHeader, opts: ReadEpochsOptions): { chosen: EdfSignal[]; perEpoch: number[] } {
  const { signals, epochS } = opts;
  if (!Number.isFinite(epochS) || epochS <= 0)
    throw new EdfFormatError(file, 'epoch length', String(epochS), `epoch length ${epochS} s is not a positive number`);
  if (!Array.isArray(signals) || signals.length === 0) throw new EdfFormatError(file, 'signals', String(signals), 'no signals requested');
  const chosen: EdfSignal[] = [];
  const perEpoch: number[] = [];
  for (const i of signals) {
    const s = header.signals[i];
    if (!Number.isInteger(i) || s === undefined)
      throw new EdfFormatError(file, 'signals', String(i), `signal index ${i} does not exist (file has ${header.signals.length} signals)`);
    const place = { signal: { index: s.index, label: s.label } };
    if (s.isAnnotation) throw new EdfFormatError(file, 'signals', String(i), `signal index ${i} is an annotation signal, not samples`, place);
    const n = s.fsHz * epochS;
    const whole = Math.round(n);
    if (whole < 1 || Math.abs(n - whole) > 1e-9 * Math.max(1, n)) {
      throw new EdfFormatError(file, 'epoch length', String(epochS), `epoch length ${epochS} s at ${s.fsHz} Hz gives ${n} samples, not a whole number`, place);
    }
    chosen.push(s);
    perEpoch.push(whole);
  }
  const chunkBytes = opts.chunkBytes ?? DEFAULT_CHUNK_BYTES;
  if (!Number.isFinite(chunkBytes) || chunkBytes <= 0)
    throw new EdfFormatError(file, 'chunk bytes', String(chunkBytes), `chunk size ${chunkBytes} bytes is not positive`);
  return { chosen, perEpoch };
}

/** End of a run of contiguous records, s from the file start. */
function segmentEnd(g: Segment, recordDurationS: number): number {
  return g.startS + g.nRecords * recordDurationS;
}

interface ChunkRead {
  first: number;
  count: number;
  into: number;
  got: Promise<number>;
}

/**
 * The data records of a file, a chunk at a time, through two buffers: while one chunk is decoded
 * the next is read into the other, so the disk read overlaps the caller's work. Own buffers
 * (byteOffset 0), so the Int16Array views are aligned. A class, not closures made anew in every
 * call of the epoch generator: V8 optimised such closures again for every recording.
 */
class RecordChunks {
  /** 16-bit samples of the current chunk (EDF): record `first` starts at word 0. */
  words: Int16Array;
  /** The same chunk as bytes (BDF decodes its 3-byte samples from these). */
  bytesNow: Uint8Array;
  first = -1;
  count = 0;
  private readonly bytes: Uint8Array[];
  private readonly views: Int16Array[];
  private readonly recB: number;
  private current = 0;
  private ahead: ChunkRead | null = null;

  constructor(
    private readonly fh: FileHandle,
    private readonly file: string,
    private readonly header: EdfHeader,
    private readonly chunkRecords: number,
  ) {
    this.recB = recordBytes(header.signals, header.bytesPerSample);
    const buffers = [new ArrayBuffer(chunkRecords * this.recB), new ArrayBuffer(chunkRecords * this.recB)];
    this.bytes = [new Uint8Array(buffers[0]), new Uint8Array(buffers[1])];
    // whole words only: a BDF chunk can have an odd length (its Int16Array view is unused)
    this.views = buffers.map((b) => new Int16Array(b, 0, b.byteLength >> 1));
    this.words = this.views[0];
    this.bytesNow = this.bytes[0];
  }

  holds(r: number): boolean {
    return r >= this.first && r < this.first + this.count;
  }

  /** Makes record r's chunk current (the one read ahead, if it starts at r), and reads the next one ahead. */
  async load(r: number): Promise<void> {
    let read: ChunkRead;
    if (this.ahead && this.ahead.first === r) read = this.ahead;
    else {
      if (this.ahead) await this.ahead.got.catch(() => undefined); // never two reads into one buffer
      read = this.startRead(r, 1 - this.current);
    }
    this.ahead = null;
    const want = read.count * this.recB;
    const got = await read.got;
    if (got < want)
      throw new EdfFormatError(this.file, 'file', String(got), `file was truncated while reading: ${got} of ${want} bytes from record ${r + 1}`, { record: r });
    this.current = read.into;
    this.words = this.views[read.into];
    this.bytesNow = this.bytes[read.into];
    this.first = r;
    this.count = read.count;
    if (r + read.count < this.header.nRecords) this.ahead = this.startRead(r + read.count, 1 - read.into);
  }

  private startRead(r: number, into: number): ChunkRead {
    const count = Math.min(this.chunkRecords, this.header.nRecords - r);
    const got = readFully(this.fh, this.file, this.bytes[into], count * this.recB, this.header.headerBytes + r * this.recB);
    got.catch(() => undefined); // awaited when used; a read left behind by an early return stays silent
    return { first: r, count, into, got };
  }
}

async function* readEpochs(
  fh: FileHandle,
  file: string,
  header: EdfHeader,
  onsets: Float64Array,
  gaps: EdfGap[],
  opts: ReadEpochsOptions,
): AsyncGenerator<EpochBlock> {
  const { chosen, perEpoch } = checkEpochOptions(file, header, opts);
  const nRec = header.nRecords;
  if (nRec === 0) return;
  const d = header.recordDurationS;
  const epochS = opts.epochS;
  const bps = header.bytesPerSample;
  const recB = recordBytes(header.signals, bps);
  const recSamples = recB / bps;
  const plan = new DecodePlan(header, chosen, perEpoch);
  // never more records per chunk than the file holds: a small file gets buffers no larger than its data
  const chunks = new RecordChunks(fh, file, header, Math.min(nRec, Math.max(1, Math.floor((opts.chunkBytes ?? DEFAULT_CHUNK_BYTES) / recB))));

  // filled by push: an array made by .map() here came out with another hidden class for every
  // file, and the decode loop's optimised code was thrown away at each new recording
  const out: Float32Array[] = [];
  for (const n of perEpoch) out.push(new Float32Array(n));
  const limits = new Int32Array(chosen.length);
  const startSample = plan.startSample;
  const segs = segmentsOf(onsets, gaps);
  const t0 = onsets[0];
  const last = segs[segs.length - 1];
  const endS = segmentEnd(last, d);
  let seg = 0;
  for (let e = 0; ; e++) {
    const a = t0 + e * epochS;
    const b = a + epochS;
    if (a >= endS - ONSET_TOLERANCE_S) return;
    while (seg < segs.length - 1 && segmentEnd(segs[seg], d) <= a + ONSET_TOLERANCE_S) seg++;
    const sg = segs[seg];
    if (a < sg.startS - ONSET_TOLERANCE_S || b > segmentEnd(sg, d) + ONSET_TOLERANCE_S) {
      if (sg === last && b > endS + ONSET_TOLERANCE_S && a >= sg.startS - ONSET_TOLERANCE_S) {
        yield { epoch: e, onsetS: a, data: null, atDigitalLimits: null, dropReason: 'end' };
        return;
      }
      yield { epoch: e, onsetS: a, data: null, atDigitalLimits: null, dropReason: 'gap' };
      continue;
    }
    // Sample range of each signal inside the segment; an EDF+D segment onset off the epoch grid is snapped to the nearest sample.
    let rFirst = Infinity;
    let rLast = -Infinity;
    for (let k = 0; k < plan.n; k++) {
      const spr = plan.samplesPerRecord[k];
      const s0 = Math.min(Math.max(0, Math.round((a - sg.startS) * plan.fsHz[k])), sg.nRecords * spr - perEpoch[k]);
      startSample[k] = s0;
      rFirst = Math.min(rFirst, Math.floor(s0 / spr));
      rLast = Math.max(rLast, Math.floor((s0 + perEpoch[k] - 1) / spr));
    }
    limits.fill(0);
    // Records outer, signals inner: every record is fetched once, in file order.
    for (let rr = rFirst; rr <= rLast; rr++) {
      const r = sg.firstRecord + rr;
      if (!chunks.holds(r)) await chunks.load(r);
      if (bps === 2) decodeRecord(chunks.words, (r - chunks.first) * recSamples, rr, plan, out, limits);
      else decodeRecord24(chunks.bytesNow, (r - chunks.first) * recSamples, rr, plan, out, limits);
    }
    yield { epoch: e, onsetS: a, data: out, atDigitalLimits: limits, dropReason: null };
  }
}
