/**
 * Outputs never destroy inputs. Before a command computes anything it names its inputs and
 * outputs (the derived ones too: the report's parameters JSON, the ledger); an output that is the
 * same file as an input or as another output (same device and inode for files that exist, same
 * real path after resolving links otherwise) is refused, naming the file it would have destroyed.
 * Results are then written through a temporary file in the same folder, renamed into place, so a
 * failed write never leaves a half-written or emptied file behind.
 */
import { chmodSync, closeSync, fsyncSync, openSync, realpathSync, renameSync, statSync, unlinkSync, writeSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import path from 'node:path';

/** A file a command reads or writes, with how the user named it (an option or an argument). */
export interface NamedFile {
  /** e.g. "--out", "the database", "the ledger" */
  what: string;
  file: string;
}

/** Exit status of a command that refused its outputs (bad input, nothing written). */
export const EXIT_OUTPUT_REFUSED = 2;

/** An output that would destroy an input or another output; nothing was written. */
export class OutputClashError extends Error {
  override name = 'OutputClashError';
}

/** A result that could not be written (no permission, no room): the file named, the system's reason. */
export class OutputWriteError extends Error {
  override name = 'OutputWriteError';
}

interface Identity {
  /** "dev:ino" of a file that exists, else null */
  inode: string | null;
  /** the real path (the folder's real path plus the name when the file does not exist yet) */
  real: string;
  exists: boolean;
  isDirectory: boolean;
}

function identityOf(file: string): Identity {
  const absolute = path.resolve(file);
  try {
    const st = statSync(absolute);
    return { inode: `${st.dev}:${st.ino}`, real: realpathSync(absolute), exists: true, isDirectory: st.isDirectory() };
  } catch {
    // not there yet (or a dangling link): where it would be created
    let folder = path.dirname(absolute);
    try {
      folder = realpathSync(folder);
    } catch {
      // a folder that does not exist yet: the path as given
    }
    return { inode: null, real: path.join(folder, path.basename(absolute)), exists: false, isDirectory: false };
  }
}

function same(a: Identity, b: Identity): boolean {
  return (a.inode !== null && a.inode === b.inode) || a.real === b.real;
}

/**
 * Refuses (OutputClashError) an output that is an input, another output, or a folder. Inputs and
 * outputs not given (undefined, or false for a switched-off ledger) are left out.
 */
export function refuseClashes(inputs: readonly (NamedFile | null)[], outputs: readonly (NamedFile | null)[]): void {
  const outs = outputs.filter((x): x is NamedFile => x !== null).map((x) => ({ ...x, id: identityOf(x.file) }));
  for (const [i, o] of outs.entries()) {
    if (o.id.isDirectory) throw new OutputClashError(`${o.what} ${o.file} is a folder, not a file; nothing written`);
    const other = outs.slice(0, i).find((x) => same(x.id, o.id));
    if (other) {
      throw new OutputClashError(`${o.what} ${o.file} and ${other.what} ${other.file} are the same file: one would overwrite the other; nothing written`);
    }
  }
  // an input can be destroyed only by an output that exists already (a new file is no input)
  const existing = outs.filter((o) => o.id.exists);
  if (existing.length === 0) return;
  for (const input of inputs) {
    if (input === null) continue;
    const id = identityOf(input.file);
    if (!id.exists) continue;
    const o = existing.find((x) => same(x.id, id));
    if (o)
      throw new OutputClashError(`${o.what} ${o.file} is ${input.what} ${input.file} (the same file): writing it would destroy that input; nothing written`);
  }
}

/**
 * Writes `data` to `file` through a temporary file in the same folder, renamed into place (the
 * replaced file's permissions kept; a link is followed and its target replaced). A file that is
 * not a regular file (a device such as /dev/null, a pipe) is written directly.
 */
export function writeFileReplacing(file: string, data: string | Uint8Array): void {
  try {
    replace(file, data);
  } catch (e) {
    const err = e as NodeJS.ErrnoException;
    if (typeof err.code !== 'string') throw e;
    throw new OutputWriteError(`cannot write ${file}: ${err.code} (${err.message.replace(/^[A-Z]+: /, '').replace(/, \w+ '.*'$/, '')})`);
  }
}

function replace(file: string, data: string | Uint8Array): void {
  let target = path.resolve(file);
  let mode: number | null = null;
  try {
    const st = statSync(target);
    if (!st.isFile()) {
      const fd = openSync(target, 'w');
      try {
        writeAll(fd, data);
      } finally {
        closeSync(fd);
      }
      return;
    }
    target = realpathSync(target);
    mode = st.mode & 0o7777;
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'ENOENT') throw e;
  }
  const temporary = path.join(path.dirname(target), `.${path.basename(target)}.${randomBytes(6).toString('hex')}.partial`);
  // 'wx': created new, never through an existing file or link of that name
  const fd = openSync(temporary, 'wx', mode ?? 0o666);
  try {
    try {
      writeAll(fd, data);
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
    if (mode !== null) chmodSync(temporary, mode);
    renameSync(temporary, target);
  } catch (e) {
    try {
      unlinkSync(temporary);
    } catch {
      // already renamed or never created
    }
    throw e;
  }
}

function writeAll(fd: number, data: string | Uint8Array): void {
  const bytes = typeof data === 'string' ? Buffer.from(data, 'utf8') : data;
  for (let at = 0; at < bytes.length;) at += writeSync(fd, bytes, at, bytes.length - at);
}
