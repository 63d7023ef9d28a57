/**
 * `bandwise figure`: a saved compare or band-check result drawn as a paper figure (src/core/figure builds the
 * SVG, the same text the dashboard exports) and written as SVG, or as PNG rasterised by resvg at
 * the chosen dpi with the resolution recorded in the file. Text in the PNG is set in DejaVu Sans
 * (Debian's fonts-dejavu-core) when it is installed, else in the system's fonts.
 */
import { existsSync } from 'node:fs';
import type { CompareResult } from '../core/contrast/run.ts';
import { bandCheckFigureSvg, contrastFigureSvg, pixelSize, withPhysicalDensity, type FigureOptions } from '../core/figure/index.ts';
import type { BandCheckResult } from '../core/verdict/band-check.ts';
import { refuseClashes, writeFileReplacing } from '../files/output-files.ts';
import { ReportFileError, readResult } from './write-report.ts';

/** Where Debian's fonts-dejavu-core puts the font the figures name first. */
export const DEJAVU_FILES = ['/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf', '/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf'];

/** PNG bytes of SVG text at the options' size and dpi, with a pHYs chunk; a warning when DejaVu Sans is missing. */
export async function renderPng(svg: string, o: Pick<FigureOptions, 'widthMm' | 'heightMm' | 'dpi'>): Promise<{ png: Uint8Array; warning: string | null }> {
  // loaded on use: SVG output and every other command need no native module
  const { Resvg } = await import('@resvg/resvg-js');
  const fontFiles = DEJAVU_FILES.filter((f) => existsSync(f));
  // the root's size in pixels (its viewBox in mm unchanged), so both sides are round(mm / 25.4 × dpi) exactly
  const { width, height } = pixelSize(o);
  const sized = svg.replace(/ width="[0-9.]+mm" height="[0-9.]+mm"/, ` width="${width}" height="${height}"`);
  if (sized === svg) throw new Error('figure SVG has no width and height in mm');
  const resvg = new Resvg(sized, {
    fitTo: { mode: 'original' },
    font: { loadSystemFonts: true, fontFiles, defaultFontFamily: 'DejaVu Sans' },
  });
  const png = withPhysicalDensity(resvg.render().asPng(), o.dpi);
  const warning =
    fontFiles.length === 0 ? 'DejaVu Sans is not installed, so the PNG uses another system font (Debian: apt-get install fonts-dejavu-core)' : null;
  return { png, warning };
}

/**
 * Reads the result, draws it (a compare result as `o.kind` says, a band check as its spectra and
 * effect panels), writes `out`. `asked` names the options given that apply to a compare figure
 * only (--kind, --band): refused for a band check rather than ignored.
 */
export async function writeFigure(
  resultFile: string,
  o: FigureOptions,
  out: string,
  asked: string[] = [],
): Promise<{ warning: string | null; pixels: { width: number; height: number } | null }> {
  const result = readResult(resultFile);
  if (result.kind === 'band-check' && asked.length > 0)
    throw new ReportFileError(
      `${resultFile}: ${asked.join(' and ')} ${asked.length === 1 ? 'applies' : 'apply'} to a compare result only; a band check has one figure (its spectra and effect panels)`,
    );
  refuseClashes([{ what: 'the result', file: resultFile }], [{ what: '--out', file: out }]);
  const svg = result.kind === 'compare' ? contrastFigureSvg(result as CompareResult, o) : bandCheckFigureSvg(result as BandCheckResult, o);
  if (o.format === 'svg') {
    writeFileReplacing(out, svg);
    return { warning: null, pixels: null };
  }
  const { png, warning } = await renderPng(svg, o);
  writeFileReplacing(out, png);
  return { warning, pixels: pixelSize(o) };
}
