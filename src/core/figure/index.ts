/** Paper figures of a contrast result as SVG text, and the PNG resolution chunk (pure; rasterised by the dashboard's canvas or by src/analysis/figure-file.ts). */
export { contrastFigureSvg, FigureLayoutError, mapBand } from './contrast-figure.ts';
export { bandCheckFigureSvg } from './band-check-figure.ts';
export {
  figureOptions,
  parseBandHz,
  pixelSize,
  FigureOptionError,
  FIGURE_DEFAULTS,
  FIGURE_KINDS,
  FIGURE_LIMITS,
  type FigureOptions,
  type FigureKind,
  type FigureFormat,
} from './options.ts';
export { withPhysicalDensity } from './png-density.ts';
