/**
 * Writing SVG text by hand: escaping, text elements with sizes in points on a canvas in
 * millimetres, and line wrapping by an estimated text width (no font metrics in pure code).
 */

/** Millimetres per typographic point (1 pt = 1/72 inch, 1 inch = 25.4 mm). */
export const MM_PER_PT = 25.4 / 72;

/** The figures' font: DejaVu Sans (Debian's fonts-dejavu-core), then common sans-serif fonts. */
export const FONT_FAMILY = "'DejaVu Sans', Verdana, Arial, sans-serif";

/** Mean advance width of a DejaVu Sans character in em (our estimate from its digits and lower-case letters; generous, so wrapped text stays inside). */
const EM_PER_CHAR = 0.58;

export function escapeXml(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** Estimated width of `s` in mm at `pt` points. */
export function textWidthMm(s: string, pt: number): number {
  return s.length * EM_PER_CHAR * pt * MM_PER_PT;
}

/** `s` broken at spaces into lines no wider than `widthMm` at `pt` points (a single longer word stays whole). */
export function wrapText(s: string, pt: number, widthMm: number): string[] {
  const lines: string[] = [];
  let line = '';
  for (const word of s.split(/\s+/).filter(Boolean)) {
    const next = line === '' ? word : `${line} ${word}`;
    if (line !== '' && textWidthMm(next, pt) > widthMm) {
      lines.push(line);
      line = word;
    } else line = next;
  }
  if (line !== '') lines.push(line);
  return lines;
}

const num = (x: number) => Number(x.toFixed(3)).toString();

/** One <text> element; coordinates in mm, size in pt; `anchor` start, middle or end; `rotate` degrees about (x, y). */
export function textElement(
  s: string,
  x: number,
  y: number,
  pt: number,
  opts: { anchor?: 'start' | 'middle' | 'end'; bold?: boolean; rotate?: number } = {},
): string {
  const anchor = opts.anchor && opts.anchor !== 'start' ? ` text-anchor="${opts.anchor}"` : '';
  const bold = opts.bold ? ' font-weight="bold"' : '';
  const rotate = opts.rotate ? ` transform="rotate(${opts.rotate} ${num(x)} ${num(y)})"` : '';
  return `<text x="${num(x)}" y="${num(y)}" font-size="${num(pt * MM_PER_PT)}"${anchor}${bold}${rotate}>${escapeXml(s)}</text>`;
}

/** A number in mm for an attribute (at most 3 decimals, so equal inputs give equal text). */
export const mm = num;
