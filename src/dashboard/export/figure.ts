// Figures (SVG elements rendered by Observable Plot) as standalone SVG text and as PNG.

const SVG_NS = 'http://www.w3.org/2000/svg';

/**
 * One SVG holding the SVG parts of a rendered Plot figure (a legend ramp and the plot), stacked
 * top to bottom. HTML parts (swatch legends, captions) are not SVG and are left out, so figures
 * meant for export use SVG legends (`legend: 'ramp'`).
 */
export function figureSvg(el: Element): SVGSVGElement {
  if (el instanceof SVGSVGElement) return el;
  const parts = Array.from(el.querySelectorAll('svg')).filter((s) => s.parentElement?.closest('svg') === null);
  if (parts.length === 0) throw new Error('figure holds no SVG');
  if (parts.length === 1) return parts[0];
  const out = document.createElementNS(SVG_NS, 'svg');
  let y = 0;
  let width = 0;
  for (const part of parts) {
    const { width: w, height: h } = svgSize(part);
    const copy = part.cloneNode(true) as SVGSVGElement;
    copy.setAttribute('y', String(y));
    out.append(copy);
    y += h;
    width = Math.max(width, w);
  }
  out.setAttribute('width', String(width));
  out.setAttribute('height', String(y));
  out.setAttribute('viewBox', `0 0 ${width} ${y}`);
  return out;
}

/** Standalone SVG text of `svg`, with its namespace and a white background. */
export function svgText(svg: SVGSVGElement): string {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  copy.setAttribute('xmlns', SVG_NS);
  copy.setAttribute('xmlns:xlink', 'http://www.w3.org/1999/xlink');
  const { width, height } = svgSize(svg);
  copy.setAttribute('width', String(width));
  copy.setAttribute('height', String(height));
  const bg = document.createElementNS(SVG_NS, 'rect');
  bg.setAttribute('width', '100%');
  bg.setAttribute('height', '100%');
  bg.setAttribute('fill', 'white');
  copy.insertBefore(bg, copy.firstChild);
  return '<?xml version="1.0" encoding="UTF-8"?>\n' + new XMLSerializer().serializeToString(copy);
}

function svgSize(svg: SVGSVGElement): { width: number; height: number } {
  const width = Number(svg.getAttribute('width')) || svg.viewBox.baseVal?.width || svg.clientWidth;
  const height = Number(svg.getAttribute('height')) || svg.viewBox.baseVal?.height || svg.clientHeight;
  if (!(width > 0 && height > 0)) throw new Error(`figure has no size (${width} × ${height})`);
  return { width, height };
}

/** PNG of `svg` at `scale` device pixels per CSS pixel. */
export async function svgToPng(svg: SVGSVGElement, scale = 2): Promise<Blob> {
  const { width, height } = svgSize(svg);
  const url = URL.createObjectURL(new Blob([svgText(svg)], { type: 'image/svg+xml' }));
  try {
    const img = new Image();
    img.src = url;
    await img.decode();
    const canvas = document.createElement('canvas');
    canvas.width = Math.round(width * scale);
    canvas.height = Math.round(height * scale);
    const ctx = canvas.getContext('2d');
    if (ctx === null) throw new Error('no 2D canvas available for PNG export');
    ctx.scale(scale, scale);
    ctx.drawImage(img, 0, 0, width, height);
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('PNG encoding failed'))), 'image/png'));
  } finally {
    URL.revokeObjectURL(url);
  }
}
