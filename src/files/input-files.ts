/**
 * Reading the small text files a command takes (a contrast JSON, an exclusions table): at most
 * MAX_INPUT_BYTES, so a wrong path such as /dev/zero or a huge file ends in one line instead of
 * filling the memory, and a missing or unreadable file is named with the system's reason.
 */
import { closeSync, openSync, readSync } from 'node:fs';

/** 1 MiB: far above any contrast JSON or exclusions table (a few kB). */
export const MAX_INPUT_BYTES = 1 << 20;

/** An input file that cannot be read, or is too large to be what it should be; nothing was done. */
export class InputFileError extends Error {
  override name = 'InputFileError';
}

/** The file's text (UTF-8), read in pieces up to MAX_INPUT_BYTES; `what` names it in messages (e.g. "--contrast"). */
export function readSmallText(file: string, what: string): string {
  let fd: number;
  try {
    fd = openSync(file, 'r');
  } catch (e) {
    const err = e as NodeJS.ErrnoException;
    throw new InputFileError(`${what} ${file} cannot be read: ${err.code ?? err.message}`);
  }
  try {
    const buf = Buffer.alloc(MAX_INPUT_BYTES + 1);
    let n = 0;
    for (;;) {
      let got: number;
      try {
        got = readSync(fd, buf, n, buf.length - n, null);
      } catch (e) {
        const err = e as NodeJS.ErrnoException;
        throw new InputFileError(`${what} ${file} cannot be read: ${err.code ?? err.message}${err.code === 'EISDIR' ? ' (a folder)' : ''}`);
      }
      if (got === 0) break;
      n += got;
      if (n > MAX_INPUT_BYTES)
        throw new InputFileError(
          `${what} ${file} holds more than ${MAX_INPUT_BYTES / (1 << 20)} MiB; that is not a ${what === '--contrast' ? 'contrast JSON' : 'small text file'} (read stopped there)`,
        );
    }
    return buf.subarray(0, n).toString('utf8');
  } finally {
    closeSync(fd);
  }
}
