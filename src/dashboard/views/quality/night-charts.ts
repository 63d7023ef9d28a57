// A recording's whole night on one time axis (hours from the recording start): the spectrogram of
// one channel (a raster image, one column per epoch, one row per frequency bin, colour = log10
// power), the epochs rejected on that channel as a strip, and the hypnogram.
import * as Plot from '@observablehq/plot';
import type { NightSpectra } from '../../../queries/night.ts';
import type { EpochRow } from '../../../queries/quality.ts';
import { hypnogramPlot } from './quality-charts.ts';

const SVG_NS = 'http://www.w3.org/2000/svg';
const MARGIN_LEFT = 70;
const SCHEME = 'viridis';
/** Colour unit of the spectrogram. */
export const NIGHT_COLOUR_LABEL = 'log10 power (log10 µV²/Hz)';

/** The spectrogram as pixels: column c is epoch c, row 0 the highest frequency bin. */
export interface NightRaster {
  width: number;
  height: number;
  /** RGBA, row-major; epochs without a stored spectrum are transparent */
  rgba: Uint8ClampedArray;
  /** colour scale ends, log10 µV²/Hz: the 1st and 99th percentiles of the night's values */
  domain: [number, number];
}

/** Value at fraction q of the sorted values (nearest rank; common practice). */
function quantile(sorted: Float64Array, q: number): number {
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.round(q * (sorted.length - 1))))];
}

/** Colour ends robust to a few artefact epochs: the 1st and 99th percentiles of all values. */
export function colourDomain(log10Power: Float64Array): [number, number] {
  if (log10Power.length === 0) throw new Error('the night holds no spectrum values');
  const sorted = Float64Array.from(log10Power).sort();
  const lo = quantile(sorted, 0.01);
  const hi = quantile(sorted, 0.99);
  return hi > lo ? [lo, hi] : [lo - 0.5, lo + 0.5];
}

/** 256 colours of the scheme over [0, 1], as Plot's colour scale gives them (so the legend matches the pixels). */
function colourTable(domain: [number, number]): Uint8Array {
  const scale = Plot.scale({ color: { type: 'linear', domain, scheme: SCHEME } });
  const table = new Uint8Array(256 * 3);
  for (let i = 0; i < 256; i++) {
    const c = String(scale.apply(domain[0] + ((domain[1] - domain[0]) * i) / 255));
    const hex = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(c);
    const rgb = /^rgb\((\d+),\s*(\d+),\s*(\d+)\)$/.exec(c);
    const parts = hex ? hex.slice(1).map((h) => parseInt(h, 16)) : rgb ? rgb.slice(1).map(Number) : null;
    if (parts === null) throw new Error(`colour scale gave an unreadable colour: ${c}`);
    table.set(parts, i * 3);
  }
  return table;
}

/** The night's pixels: `nEpochs` columns (epochs 0 … nEpochs − 1 of the recording), nBins rows. */
export function nightRaster(night: NightSpectra, nEpochs: number): NightRaster {
  const { nBins, epochs, log10Power } = night;
  const width = Math.max(nEpochs, (epochs.at(-1) ?? -1) + 1);
  const domain = colourDomain(log10Power);
  const table = colourTable(domain);
  const rgba = new Uint8ClampedArray(width * nBins * 4);
  const span = domain[1] - domain[0];
  for (let r = 0; r < epochs.length; r++) {
    const c = epochs[r];
    for (let b = 0; b < nBins; b++) {
      // linear colour scale, clamped at the ends: i = 255·(v − lo)/(hi − lo)
      const t = (log10Power[r * nBins + b] - domain[0]) / span;
      const i = Math.round(255 * Math.min(1, Math.max(0, t)));
      const at = ((nBins - 1 - b) * width + c) * 4;
      rgba[at] = table[i * 3];
      rgba[at + 1] = table[i * 3 + 1];
      rgba[at + 2] = table[i * 3 + 2];
      rgba[at + 3] = 255;
    }
  }
  return { width, height: nBins, rgba, domain };
}

/** The raster as an SVG <image> over [x0, x1] h × [f0, f1] Hz, stretched to the plot's scales. */
function rasterMark(href: string, raster: NightRaster, x: [number, number], y: [number, number]): Plot.RenderFunction {
  return (_index, scales) => {
    const img = document.createElementNS(SVG_NS, 'image');
    const left = scales.x!(x[0]) as number;
    const top = scales.y!(y[1]) as number;
    img.setAttribute('x', String(left));
    img.setAttribute('y', String(top));
    img.setAttribute('width', String((scales.x!(x[1]) as number) - left));
    img.setAttribute('height', String((scales.y!(y[0]) as number) - top));
    img.setAttribute('preserveAspectRatio', 'none');
    img.setAttribute('style', 'image-rendering: pixelated');
    img.setAttribute('href', href);
    img.setAttribute('aria-label', 'spectrogram');
    img.setAttribute('data-epochs', String(raster.width));
    img.setAttribute('data-bins', String(raster.height));
    return img;
  };
}

/**
 * The three panels, top first: spectrogram with its colour bar, rejected epochs, hypnogram.
 * `href` is the raster as an image address (night-raster.ts draws it on a canvas).
 */
export function nightPanels(night: NightSpectra, raster: NightRaster, href: string, epochs: EpochRow[], epochS: number): Plot.PlotOptions[] {
  const t0 = (epochs[0]?.onsetS ?? 0) / 3600;
  const x: [number, number] = [t0, t0 + (raster.width * epochS) / 3600];
  const half = night.freqStepHz / 2;
  const y: [number, number] = [night.freqStartHz - half, night.freqStartHz + (night.nBins - 1) * night.freqStepHz + half];
  // two invisible corner dots (r 0) make the x, y and colour scales; the image is drawn by rasterMark
  const corners = [
    { t: x[0], f: y[0], v: raster.domain[0] },
    { t: x[1], f: y[1], v: raster.domain[1] },
  ];
  const spectrogram: Plot.PlotOptions = {
    height: 280,
    marginLeft: MARGIN_LEFT,
    x: { domain: x, label: null },
    y: { domain: y, label: 'frequency (Hz)' },
    color: { type: 'linear', domain: raster.domain, scheme: SCHEME, legend: true, label: NIGHT_COLOUR_LABEL },
    marks: [Plot.dot(corners, { x: 't', y: 'f', fill: 'v', r: 0 }), rasterMark(href, raster, x, y), Plot.frame({ stroke: '#999' })],
  };
  const rejected = epochs.filter((e) => e.reasons !== '').map((e) => ({ x1: e.onsetS / 3600, x2: (e.onsetS + epochS) / 3600, reasons: e.reasons }));
  const strip: Plot.PlotOptions = {
    height: 36,
    marginLeft: MARGIN_LEFT,
    marginTop: 6,
    marginBottom: 6,
    x: { domain: x, axis: null },
    marks: [
      Plot.barX(rejected, { x1: 'x1', x2: 'x2', fill: '#c62828', title: 'reasons', className: 'rejected-epochs' }),
      Plot.frame({ stroke: '#999' }),
      Plot.text(['rejected'], { frameAnchor: 'left', textAnchor: 'end', dx: -6 }),
    ],
  };
  const hypnogram = hypnogramPlot(epochs, epochS);
  return [spectrogram, strip, { ...hypnogram, x: { domain: x, label: 'time from recording start (h)' } }];
}
