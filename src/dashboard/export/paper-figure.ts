// The paper figure of a contrast result, as the dashboard exports it: the SVG text of
// src/core/figure (the same text `bandwise figure` writes), or a PNG drawn from it on a canvas at
// the chosen dpi with the resolution recorded in the file.
import type { CompareResult } from '../../core/contrast/run.ts';
import { bandCheckFigureSvg, contrastFigureSvg, figureOptions, pixelSize, withPhysicalDensity, type FigureOptions } from '../../core/figure/index.ts';
import type { BandCheckResult } from '../../core/verdict/band-check.ts';
import { fileNameFrom } from './download.ts';

/** A result a paper figure is drawn from. */
export type FigureResult = CompareResult | BandCheckResult;

/** The figure's SVG text for the export's settings (defaults filled, values checked); a band check ignores kind and band. */
export function paperFigureSvg(result: FigureResult, settings: Partial<FigureOptions>): string {
  const o = figureOptions(settings);
  return result.kind === 'compare' ? contrastFigureSvg(result, o) : bandCheckFigureSvg(result, o);
}

/** "figure-n2-log-psd-statistic-map.svg", "figure-n2-band-check-sigma.png" */
export function paperFigureName(result: FigureResult, o: Pick<FigureOptions, 'kind' | 'format'>): string {
  const what = result.kind === 'compare' ? `${result.measure} ${o.kind}` : `band check ${result.band.name}`;
  return fileNameFrom(`figure ${result.contrast.stage} ${what}`, o.format);
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
export async function paperFigureFile(result: FigureResult, settings: Partial<FigureOptions>): Promise<{ blob: Blob; fileName: string }> {
  const o = figureOptions(settings);
  const svg = paperFigureSvg(result, o);
  const blob = o.format === 'svg' ? new Blob([svg], { type: 'image/svg+xml' }) : await svgPng(svg, o);
  return { blob, fileName: paperFigureName(result, o) };
}
