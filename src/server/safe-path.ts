// Map a request path onto a file inside the app folder, refusing anything that could leave it.
import { realpath, stat } from 'node:fs/promises';
import path from 'node:path';

/**
 * Decode a request path (already stripped of its query) into safe segments, or return null.
 * Refused: not starting with '/', bad percent-encoding, anything still containing '%' after one
 * decode (double encoding), backslashes, NUL, empty segments, '.', '..' and hidden segments.
 */
export function requestSegments(rawPath: string): string[] | null {
  if (!rawPath.startsWith('/')) return null;
  let decoded: string;
  try {
    decoded = decodeURIComponent(rawPath);
  } catch {
    return null;
  }
  if (/[%\\\0]/.test(decoded)) return null;
  if (decoded === '/') return [];
  const segments = decoded.slice(1).split('/');
  for (const s of segments) {
    if (s === '' || s.startsWith('.')) return null;
  }
  return segments;
}

/**
 * Resolve segments to a regular file whose real path (symlinks followed) lies inside `rootReal`
 * (itself a real path). Returns the real file path and its size, or null.
 */
export async function resolveInside(rootReal: string, segments: string[]): Promise<{ file: string; size: number } | null> {
  const candidate = path.join(rootReal, ...segments);
  let real: string;
  try {
    real = await realpath(candidate);
  } catch {
    return null;
  }
  if (!real.startsWith(rootReal + path.sep)) return null;
  const info = await stat(real);
  if (!info.isFile()) return null;
  return { file: real, size: info.size };
}
