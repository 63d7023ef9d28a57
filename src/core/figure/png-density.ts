/**
 * Writes the resolution into a PNG: a pHYs chunk (pixels per metre, unit 1 = metre) placed right
 * after IHDR, so that programs that lay out pages print the figure at the size chosen in mm.
 * Chunk layout and CRC-32 as in the PNG specification (W3C, Third Edition, sections 5.3, 11.3.5.3
 * and annex D).
 */

const SIGNATURE = [137, 80, 78, 71, 13, 10, 26, 10];

// CRC-32 over the chunk type and data: polynomial 0xEDB88320 (reflected), initial and final XOR 0xFFFFFFFF (PNG spec annex D)
const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

export function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (let i = 0; i < bytes.length; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** `png` with a pHYs chunk of `dpi` (rounded to whole pixels per metre) and any earlier pHYs dropped. */
export function withPhysicalDensity(png: Uint8Array, dpi: number): Uint8Array {
  if (!(dpi > 0)) throw new Error(`dpi must be positive, got ${dpi}`);
  if (png.length < 33 || SIGNATURE.some((b, i) => png[i] !== b)) throw new Error('not a PNG file (signature missing)');
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  const ihdrEnd = 8 + 12 + view.getUint32(8); // signature, then IHDR: length, type, data, CRC
  const perMetre = Math.round(dpi / 0.0254);
  const chunk = new Uint8Array(21); // length 4, type 4, data 9, CRC 4
  const c = new DataView(chunk.buffer);
  c.setUint32(0, 9);
  chunk.set([0x70, 0x48, 0x59, 0x73], 4); // "pHYs"
  c.setUint32(8, perMetre);
  c.setUint32(12, perMetre);
  chunk[16] = 1; // unit: metre
  c.setUint32(17, crc32(chunk.subarray(4, 17)));
  const rest: Uint8Array[] = [];
  for (let at = ihdrEnd; at < png.length;) {
    const len = view.getUint32(at);
    const type = String.fromCharCode(...png.subarray(at + 4, at + 8));
    if (type !== 'pHYs') rest.push(png.subarray(at, at + 12 + len));
    at += 12 + len;
  }
  const out = new Uint8Array(ihdrEnd + chunk.length + rest.reduce((a, r) => a + r.length, 0));
  out.set(png.subarray(0, ihdrEnd));
  out.set(chunk, ihdrEnd);
  let at = ihdrEnd + chunk.length;
  for (const r of rest) {
    out.set(r, at);
    at += r.length;
  }
  return out;
}
