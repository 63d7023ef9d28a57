/** SHA-256 of file bytes, read in 1-MiB pieces into one reused buffer (no garbage per piece). */
import { createHash, type Hash } from 'node:crypto';
import { open, type FileHandle } from 'node:fs/promises';

const PIECE_BYTES = 1 << 20;

/** Feeds bytes [from, end of file) of an open file into `hash`. */
export async function hashRestOfFile(fh: FileHandle, hash: Hash, from: number): Promise<void> {
  const buf = new Uint8Array(PIECE_BYTES);
  for (let position = from; ;) {
    const { bytesRead } = await fh.read(buf, 0, buf.length, position);
    if (bytesRead === 0) return;
    hash.update(buf.subarray(0, bytesRead));
    position += bytesRead;
  }
}

/** SHA-256 (hex) of a whole file. */
export async function fileSha256(file: string): Promise<string> {
  const hash = createHash('sha256');
  const fh = await open(file, 'r');
  try {
    await hashRestOfFile(fh, hash, 0);
  } finally {
    await fh.close();
  }
  return hash.digest('hex');
}
