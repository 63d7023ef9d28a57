// The paper figure of a contrast result, as the dashboard exports it: the SVG text of
// src/core/figure (the same text `bandwise figure` writes), or a PNG drawn from it on a canvas at
// the chosen dpi with the resolution recorded in the file.
import type { CompareResult } from '../../core/contrast/run.ts';
import { contrastFigureSvg, figureOptions, pixelSize, withPhysicalDensity, type FigureOptions } from '../../core/figure/index.ts';
import { fileNameFrom } from './download.ts';

/** The figure's SVG text for the export's settings (defaults filled, values checked). */
export function paperFigureSvg(result: CompareResult, settings: Partial<FigureOptions>): string {
  return contrastFigureSvg(result, figureOptions(settings));
}

/** "figure-n2-log-psd-statistic-map.svg" */
export function paperFigureName(result: CompareResult, o: Pick<FigureOptions, 'kind' | 'format'>): string {
  return fileNameFrom(`figure ${result.contrast.stage} ${result.measure} ${o.kind}`, o.format);
}

/** PNG of SVG text at round(mm / 25.4 × dpi) pixels each way, drawn by the browser. */
async function svgPng(svg: string, o: FigureOptions): Promise<Blob> {
  const { width, height } = pixelSize(o);
  const url = URL.createObjectURL(new Blob([svg], { type: 'image/svg+xml' }));
  try {
    const img = new Image();
    img.src = url;
    await img.decode();
    const canvas = document.createElement('canvas');
    canvas.width = width;
    canvas.height = height;
    const ctx = canvas.getContext('2d');
    if (ctx === null) throw new Error('no 2D canvas available for PNG export');
    ctx.drawImage(img, 0, 0, width, height);
    const png = await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('PNG encoding failed'))), 'image/png'));
    const bytes = withPhysicalDensity(new Uint8Array(await png.arrayBuffer()), o.dpi);
    return new Blob([bytes as Uint8Array<ArrayBuffer>], { type: 'image/png' });
  } finally {
    URL.revokeObjectURL(url);
  }
}

/** The export's file: SVG text or PNG, and its name. */
export async function paperFigureFile(result: CompareResult, settings: Partial<FigureOptions>): Promise<{ blob: Blob; fileName: string }> {
  const o = figureOptions(settings);
  const svg = contrastFigureSvg(result, o);
  const blob = o.format === 'svg' ? new Blob([svg], { type: 'image/svg+xml' }) : await svgPng(svg, o);
  return { blob, fileName: paperFigureName(result, o) };
}
