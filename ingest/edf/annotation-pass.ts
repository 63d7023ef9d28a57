// One pass over the annotation signal(s) of an EDF+/BDF+ file (EDF+ 2003 §2.2): positioned
// reads of just those bytes when records are 16 kB or more; smaller records are read whole in
// 4-MiB chunks (the OS reads whole pages anyway), and those whole-record reads also feed the
// file hash. BDF+ annotation signals carry the TAL bytes in their 3-byte samples, so the same
// bytes are parsed; only the width (bytesPerSample · samples per record) differs.
import type { Hash } from 'node:crypto';
import type { FileHandle } from 'node:fs/promises';
import { EdfFormatError } from './errors.ts';
import { isPlusVariant, recordBytes, type EdfHeader, type EdfSignal } from './header.ts';
import { readFully } from './read-fully.ts';
import { parseTals, type EdfAnnotation } from './tal.ts';

/** Bytes of data records per read when records are read whole (4 MiB). */
export const DEFAULT_CHUNK_BYTES = 4 * 1024 * 1024;
/** Records whose annotation bytes are fetched by one batch of positioned reads. */
const ANNOTATION_BATCH_RECORDS = 512;
/** Records at least this large get positioned reads of their annotation bytes only; smaller ones are read whole. */
const SLICE_READ_MIN_RECORD_BYTES = 16384;

export interface AnnotationPass {
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
export async function readAnnotationSignals(fh: FileHandle, file: string, header: EdfHeader, hash: Hash | null): Promise<AnnotationPass> {
  const annSignals = header.signals.filter((s) => s.isAnnotation);
  const annotations: EdfAnnotation[] = [];
  if (annSignals.length === 0 || header.nRecords === 0) return { annotations, timeKeeping: null, hashed: header.nRecords === 0 };
  const bps = header.bytesPerSample;
  const recB = recordBytes(header.signals, bps);
  const byteOffset: number[] = []; // byte offset of each signal inside a record (EDF 1992 §2.2)
  let acc = 0;
  for (const s of header.signals) {
    byteOffset.push(acc);
    acc += bps * s.samplesPerRecord;
  }
  const annBytes = annSignals.reduce((a, s) => a + bps * s.samplesPerRecord, 0);
  // Small records are read whole, chunk by chunk: the OS reads whole pages anyway, and one read per tiny record would dominate.
  const wholeRecords = recB < SLICE_READ_MIN_RECORD_BYTES;
  // never more records than the file holds: a small file gets a buffer no larger than its data
  const batch = Math.min(header.nRecords, wholeRecords ? Math.max(1, Math.floor(DEFAULT_CHUNK_BYTES / recB)) : ANNOTATION_BATCH_RECORDS);
  const buf = new Uint8Array(batch * (wholeRecords ? recB : annBytes));
  const timeKeeping = new Float64Array(header.nRecords);
  // annotation signal k of record r (r0 ≤ r < r1) sits at buf[(r − r0)·stride + within[k] …], bps·samplesPerRecord bytes
  const stride = wholeRecords ? recB : annBytes;
  const within = new Int32Array(annSignals.length);
  for (let k = 0, o = 0; k < annSignals.length; o += bps * annSignals[k].samplesPerRecord, k++) within[k] = wholeRecords ? byteOffset[annSignals[k].index] : o;
  for (let r0 = 0; r0 < header.nRecords; r0 += batch) {
    const r1 = Math.min(header.nRecords, r0 + batch);
    if (wholeRecords) {
      const want = (r1 - r0) * recB;
      const got = await readFully(fh, file, buf, want, header.headerBytes + r0 * recB);
      if (got < want)
        throw new EdfFormatError(file, 'file', String(got), `file was truncated while reading: ${got} of ${want} bytes from record ${r0 + 1}`, { record: r0 });
      hash?.update(buf.subarray(0, want));
    } else {
      // Positioned reads of just the annotation bytes of each record, issued together.
      const reads: Promise<void>[] = [];
      for (let r = r0; r < r1; r++) {
        for (let k = 0; k < annSignals.length; k++) {
          const sig = annSignals[k];
          const width = bps * sig.samplesPerRecord;
          const start = (r - r0) * stride + within[k];
          reads.push(
            readFully(fh, file, buf.subarray(start, start + width), width, header.headerBytes + r * recB + byteOffset[sig.index]).then((got) => {
              if (got < width)
                throw new EdfFormatError(
                  file,
                  'file',
                  String(got),
                  `file was truncated while reading: record ${r + 1} gave ${got} of ${width} annotation bytes`,
                  { record: r },
                );
            }),
          );
        }
      }
      await Promise.all(reads);
    }
    talsOfBatch(file, header, annSignals, r0, r1, buf, stride, within, timeKeeping, annotations);
  }
  return { annotations, timeKeeping: isPlusVariant(header.variant) ? timeKeeping : null, hashed: wholeRecords };
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
  const isPlus = isPlusVariant(header.variant);
  const bps = header.bytesPerSample;
  for (let r = r0; r < r1; r++) {
    for (let k = 0; k < annSignals.length; k++) {
      const sig = annSignals[k];
      const at = (r - r0) * stride + within[k];
      const tals = parseTals(buf.subarray(at, at + bps * sig.samplesPerRecord), file, r, { index: sig.index, label: sig.label });
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
          // named by position and onset only: the text may hold a name
          const seen = tk === undefined ? 'no annotation list' : `TAL 1 at onset ${tk.onsetS}`;
          throw new EdfFormatError(
            file,
            'annotations',
            tk === undefined ? '' : String(tk.onsetS),
            `${header.variant} record starts with ${seen} instead of a time-keeping TAL (onset, then an empty text)`,
            { record: r, signal: { index: sig.index, label: sig.label } },
          );
        }
      }
      for (let t = firstTal; t < tals.length; t++) {
        const texts = tals[t].texts.filter(nonEmpty);
        if (texts.length > 0) annotations.push({ onsetS: tals[t].onsetS, durationS: tals[t].durationS, texts });
      }
    }
  }
}
