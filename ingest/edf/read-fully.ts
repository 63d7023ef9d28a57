// Positioned reads that keep reading until the bytes asked for have come (or the file ends).
import type { FileHandle } from 'node:fs/promises';
import { EdfIoError } from './errors.ts';

/** Reads exactly `length` bytes at `position` into `target` (offset 0), or reports how many came. */
export async function readFully(fh: FileHandle, file: string, target: Uint8Array, length: number, position: number): Promise<number> {
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
