// Streaming EDF/EDF+ reader (Kemp et al. 1992; Kemp & Olivan 2003). Opens a file, parses and
// validates its header, makes one pass over the annotation signal (positioned reads of just
// those bytes when records are 16 kB or more; smaller records are read whole in 4-MiB chunks,
// as the OS reads whole pages anyway), and then hands out whole epochs of physical samples, reading the data records
// in chunks through one FileHandle so memory stays bounded whatever the file size. On request it
// also hashes the file (SHA-256), in the annotation pass's own reads when that pass reads every byte.
import { createHash, type Hash } from 'node:crypto';
import { open, type FileHandle } from 'node:fs/promises';
import { endianness } from 'node:os';
import { EdfFormatError, EdfIoError, isEdfError, showValue } from './errors.ts';
import { parseEdfHeader, recordBytes, FIXED_HEADER_BYTES, BYTES_PER_SIGNAL_HEADER, type EdfHeader, type EdfSignal } from './header.ts';
import { parseTals, type EdfAnnotation } from './tal.ts';
import { hashRestOfFile } from '../file-sha256.ts';

export type { EdfAnnotation } from './tal.ts';
export type { EdfHeader, EdfSignal } from './header.ts';

/** Time differences below this are not gaps or overlaps: 100 µs, the annotation time resolution of EDFlib (common practice). */
export const ONSET_TOLERANCE_S = 1e-4;
const DEFAULT_CHUNK_BYTES = 4 * 1024 * 1024;
/** Records whose annotation bytes are fetched by one batch of positioned reads. */
const ANNOTATION_BATCH_RECORDS = 512;
/** Records at least this large get positioned reads of their annotation bytes only; smaller ones are read whole. */
const SLICE_READ_MIN_RECORD_BYTES = 16384;

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
  readEpochs(opts: ReadEpochsOptions): AsyncGenerator<EpochBlock>;
  close(): Promise<void>;
}

/** Reads exactly `length` bytes at `position` into `target` (offset 0), or reports how many came. */
async function readFully(fh: FileHandle, file: string, target: Uint8Array, length: number, position: number): Promise<number> {
  let done = 0;
  while (done < length) {
    let n: number;
    try {
      ({ bytesRead: n } = await fh.read(target, done, length - done, position + done));
    } catch (cause) {
      throw new EdfIoError(file, 'read', cause);
    }
    if (n === 0) break;
    done += n;
  }
  return done;
}

/** Wraps anything unexpected so no raw exception leaves the reader. */
function wrapUnexpected(file: string, e: unknown): Error {
  if (isEdfError(e)) return e;
  if (typeof e === 'object' && e !== null && 'code' in e) return new EdfIoError(file, 'read', e);
  return new EdfFormatError(file, 'file', String(e), `unexpected failure while reading: ${e instanceof Error ? e.message : String(e)}`, {}, { cause: e });
}

interface AnnotationPass {
  annotations: EdfAnnotation[];
  /** Onset of each record from its time-keeping TAL, or null when the file has none. */
  timeKeeping: Float64Array | null;
  /** True when every data-record byte went into the hash, in file order. */
  hashed: boolean;
}

/**
 * One pass over the annotation signal(s): positioned reads of just their bytes, batch by batch,
 * or whole records for small records; those whole-record reads also feed `hash` when given.
 */
async function readAnnotationSignals(fh: FileHandle, file: string, header: EdfHeader, hash: Hash | null): Promise<AnnotationPass> {
  const annSignals = header.signals.filter((s) => s.isAnnotation);
  const annotations: EdfAnnotation[] = [];
  if (annSignals.length === 0 || header.nRecords === 0) return { annotations, timeKeeping: null, hashed: header.nRecords === 0 };
  const recB = recordBytes(header.signals);
  const byteOffset: number[] = []; // byte offset of each signal inside a record (EDF 1992 §2.2)
  let acc = 0;
  for (const s of header.signals) {
    byteOffset.push(acc);
    acc += 2 * s.samplesPerRecord;
  }
  const annBytes = annSignals.reduce((a, s) => a + 2 * s.samplesPerRecord, 0);
  // Small records are read whole, chunk by chunk: the OS reads whole pages anyway, and one read per tiny record would dominate.
  const wholeRecords = recB < SLICE_READ_MIN_RECORD_BYTES;
  // never more records than the file holds: a small file gets a buffer no larger than its data
  const batch = Math.min(header.nRecords, wholeRecords ? Math.max(1, Math.floor(DEFAULT_CHUNK_BYTES / recB)) : ANNOTATION_BATCH_RECORDS);
  const buf = new Uint8Array(batch * (wholeRecords ? recB : annBytes));
  const isPlus = header.variant !== 'EDF';
  const timeKeeping = new Float64Array(header.nRecords);
  // annotation signal k of record r (r0 ≤ r < r1) sits at buf[(r − r0)·stride + within[k] …], 2·samplesPerRecord bytes
  const stride = wholeRecords ? recB : annBytes;
  const within = new Int32Array(annSignals.length);
  for (let k = 0, o = 0; k < annSignals.length; o += 2 * annSignals[k].samplesPerRecord, k++) within[k] = wholeRecords ? byteOffset[annSignals[k].index] : o;
  for (let r0 = 0; r0 < header.nRecords; r0 += batch) {
    const r1 = Math.min(header.nRecords, r0 + batch);
    if (wholeRecords) {
      const want = (r1 - r0) * recB;
      const got = await readFully(fh, file, buf, want, header.headerBytes + r0 * recB);
      if (got < want) throw new EdfFormatError(file, 'file', String(got), `file was truncated while reading: ${got} of ${want} bytes from record ${r0 + 1}`, { record: r0 });
      hash?.update(buf.subarray(0, want));
    } else {
      // Positioned reads of just the annotation bytes of each record, issued together.
      const reads: Promise<void>[] = [];
      for (let r = r0; r < r1; r++) {
        for (let k = 0; k < annSignals.length; k++) {
          const sig = annSignals[k];
          const width = 2 * sig.samplesPerRecord;
          const start = (r - r0) * stride + within[k];
          reads.push(
            readFully(fh, file, buf.subarray(start, start + width), width, header.headerBytes + r * recB + byteOffset[sig.index]).then((got) => {
              if (got < width) throw new EdfFormatError(file, 'file', String(got), `file was truncated while reading: record ${r + 1} gave ${got} of ${width} annotation bytes`, { record: r });
            }),
          );
        }
      }
      await Promise.all(reads);
    }
    talsOfBatch(file, header, annSignals, r0, r1, buf, stride, within, timeKeeping, annotations);
  }
  return { annotations, timeKeeping: isPlus ? timeKeeping : null, hashed: wholeRecords };
}

const nonEmpty = (text: string) => text !== '';

/**
 * The TALs of records r0 … r1 − 1 (annotation signal k of record r at buf[(r − r0)·stride +
 * within[k]]): time-keeping onsets into timeKeeping, the other annotations appended to
 * `annotations`. A plain function, not a loop inside the async pass, so its optimised code
 * serves every batch and every file instead of being compiled again for each call of the pass.
 */
function talsOfBatch(
  file: string,
  header: EdfHeader,
  annSignals: EdfSignal[],
  r0: number,
  r1: number,
  buf: Uint8Array,
  stride: number,
  within: Int32Array,
  timeKeeping: Float64Array,
  annotations: EdfAnnotation[],
): void {
  const isPlus = header.variant !== 'EDF';
  for (let r = r0; r < r1; r++) {
    for (let k = 0; k < annSignals.length; k++) {
      const sig = annSignals[k];
      const at = (r - r0) * stride + within[k];
      const tals = parseTals(buf.subarray(at, at + 2 * sig.samplesPerRecord), file, r, { index: sig.index, label: sig.label });
      let firstTal = 0;
      if (k === 0) {
        // EDF+ 2003 §2.2.4: the first TAL of each record in the first annotation signal is the
        // time-keeping one: empty first text, onset = the record's start.
        const tk = tals[0];
        const isTimeKeeping = tk !== undefined && tk.texts.length > 0 && tk.texts[0] === '';
        if (isTimeKeeping) {
          timeKeeping[r] = tk.onsetS;
          tals[0] = { onsetS: tk.onsetS, durationS: tk.durationS, texts: tk.texts.slice(1) };
          if (tals[0].texts.length === 0) firstTal = 1;
        } else if (isPlus) {
          const seen = tk === undefined ? 'no annotation list' : `a list at onset ${tk.onsetS} with text "${showValue(tk.texts[0] ?? '')}"`;
          throw new EdfFormatError(file, 'annotations', tk === undefined ? '' : String(tk.onsetS), `${header.variant} record starts with ${seen} instead of a time-keeping TAL (onset, then an empty text)`, { record: r, signal: { index: sig.index, label: sig.label } });
        }
      }
      for (let t = firstTal; t < tals.length; t++) {
        const texts = tals[t].texts.filter(nonEmpty);
        if (texts.length > 0) annotations.push({ onsetS: tals[t].onsetS, durationS: tals[t].durationS, texts });
      }
    }
  }
}

/** Record onsets and gaps: k·duration for EDF, checked for EDF+C, from the time-keeping TALs for EDF+D. */
function recordTiming(file: string, header: EdfHeader, timeKeeping: Float64Array | null): { onsets: Float64Array; gaps: EdfGap[] } {
  const n = header.nRecords;
  const d = header.recordDurationS;
  const onsets = new Float64Array(n);
  const gaps: EdfGap[] = [];
  if (header.variant !== 'EDF+D') {
    const t0 = timeKeeping ? timeKeeping[0] : 0;
    for (let k = 0; k < n; k++) {
      onsets[k] = t0 + k * d;
      // EDF+ 2003 §2.1.3.1: in EDF+C every record starts where the previous one ended.
      if (timeKeeping && Math.abs(timeKeeping[k] - onsets[k]) > ONSET_TOLERANCE_S) {
        throw new EdfFormatError(file, 'annotations', String(timeKeeping[k]), `time-keeping onset ${timeKeeping[k]} s breaks the contiguity of an EDF+C file (expected ${onsets[k]} s)`, { record: k });
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
      throw new EdfFormatError(file, 'annotations', String(tk[k]), `time-keeping onset ${tk[k]} s is before the end of the previous record (${prevEnd} s): records overlap`, { record: k });
    }
    if (tk[k] > prevEnd + ONSET_TOLERANCE_S) gaps.push({ afterRecord: k - 1, startS: prevEnd, endS: tk[k] });
  }
  return { onsets, gaps };
}

export interface OpenEdfOptions {
  /** Hash the file bytes too (EdfFile.sha256). */
  sha256?: boolean;
}

/** Opens an EDF/EDF+ file. Throws EdfFormatError or EdfIoError, nothing else. */
export async function openEdf(path: string, options: OpenEdfOptions = {}): Promise<EdfFile> {
  if (endianness() !== 'LE') throw new EdfIoError(path, 'decode', new Error('this reader decodes int16 with the host byte order and needs a little-endian host'));
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
      await hashRestOfFile(fh, whole, whole === hash ? header.headerBytes + header.nRecords * recordBytes(header.signals) : 0);
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
  if (!Number.isFinite(epochS) || epochS <= 0) throw new EdfFormatError(file, 'epoch length', String(epochS), `epoch length ${epochS} s is not a positive number`);
  if (!Array.isArray(signals) || signals.length === 0) throw new EdfFormatError(file, 'signals', String(signals), 'no signals requested');
  const chosen: EdfSignal[] = [];
  const perEpoch: number[] = [];
  for (const i of signals) {
    const s = header.signals[i];
    if (!Number.isInteger(i) || s === undefined) throw new EdfFormatError(file, 'signals', String(i), `signal index ${i} does not exist (file has ${header.signals.length} signals)`);
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
  if (!Number.isFinite(chunkBytes) || chunkBytes <= 0) throw new EdfFormatError(file, 'chunk bytes', String(chunkBytes), `chunk size ${chunkBytes} bytes is not positive`);
  return { chosen, perEpoch };
}

/**
 * Where and how each requested signal is decoded, in typed arrays (one row per requested signal k):
 * its word offset inside a record, samples per record and per epoch, scaling, and the first sample
 * of the current epoch.
 */
class DecodePlan {
  readonly n: number;
  /** int16 offset of signal k inside a record (EDF 1992 §2.2) */
  readonly wordOffset: Int32Array;
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
    this.wordOffset = Int32Array.from(chosen, (s) => offsets[s.index]);
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
 * Physical values of `count` digital samples src[from …] into dst[to …] (EDF 1992 §2.2 scaling:
 * phys = pmin + (dig − dmin)·(pmax − pmin)/(dmax − dmin), `gain` the last factor). Returns how
 * many were at or beyond the digital limits. A plain function, so the engine optimises the loop
 * fully (it is the inner loop of every ingest; the generator around it is not).
 */
function decodeSamples(src: Int16Array, from: number, dst: Float32Array, to: number, count: number, pmin: number, dmin: number, dmax: number, gain: number): number {
  let atLimits = 0;
  for (let i = 0; i < count; i++) {
    const v = src[from + i];
    dst[to + i] = pmin + (v - dmin) * gain;
    if (v <= dmin || v >= dmax) atLimits++;
  }
  return atLimits;
}

/**
 * Record rr of the current segment (its words from recBase in chunk) into the epoch buffers: for
 * each requested signal k, the samples of the epoch (p.startSample[k], p.perEpoch[k] of them) that
 * fall in this record. A plain function, so its optimised code outlives one generator's run.
 */
function decodeRecord(chunk: Int16Array, recBase: number, rr: number, p: DecodePlan, out: Float32Array[], limits: Int32Array): void {
  for (let k = 0; k < p.n; k++) {
    const spr = p.samplesPerRecord[k];
    const first = p.startSample[k];
    const from = Math.max(first, rr * spr);
    const to = Math.min(first + p.perEpoch[k], (rr + 1) * spr);
    if (from >= to) continue;
    limits[k] += decodeSamples(chunk, recBase + p.wordOffset[k] + (from - rr * spr), out[k], from - first, to - from, p.physicalMin[k], p.digitalMin[k], p.digitalMax[k], p.gain[k]);
  }
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
  /** Samples of the current chunk: record `first` starts at word 0. */
  words: Int16Array;
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
    this.recB = recordBytes(header.signals);
    const buffers = [new ArrayBuffer(chunkRecords * this.recB), new ArrayBuffer(chunkRecords * this.recB)];
    this.bytes = [new Uint8Array(buffers[0]), new Uint8Array(buffers[1])];
    this.views = [new Int16Array(buffers[0]), new Int16Array(buffers[1])];
    this.words = this.views[0];
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
    if (got < want) throw new EdfFormatError(this.file, 'file', String(got), `file was truncated while reading: ${got} of ${want} bytes from record ${r + 1}`, { record: r });
    this.current = read.into;
    this.words = this.views[read.into];
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
  const recB = recordBytes(header.signals);
  const recWords = recB / 2;
  const plan = new DecodePlan(header, chosen, perEpoch);
  const chunks = new RecordChunks(fh, file, header, Math.max(1, Math.floor((opts.chunkBytes ?? DEFAULT_CHUNK_BYTES) / recB)));

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
      decodeRecord(chunks.words, (r - chunks.first) * recWords, rr, plan, out, limits);
    }
    yield { epoch: e, onsetS: a, data: out, atDigitalLimits: limits, dropReason: null };
  }
}
