/**
 * A band check result as a paper figure, written as SVG text in the same frame as the contrast
 * figure (contrast-figure.ts: canvas in mm, text in pt): above, each group's mean log10 spectrum
 * with its mean aperiodic fit (dashed); below, the frequency-wise effect size with its interval
 * and the significant clusters; the band shaded yellow, its flanks grey; and a caption with the
 * parameters and the verdict.
 */
import { designTitle, statisticLabel } from '../contrast/labels.ts';
import type { BandCheckResult } from '../verdict/band-check.ts';
import { FIGURE_ALPHA } from './caption.ts';
import { FigureLayoutError, niceTicks } from './contrast-figure.ts';
import type { FigureOptions } from './options.ts';
import { escapeXml, FONT_FAMILY, MM_PER_PT, mm, textElement, wrapText } from './svg-text.ts';

const PT = { title: 8, label: 7, tick: 6, caption: 6.5 } as const;
const MARGIN_MM = 3;
const lineMm = (pt: number) => pt * MM_PER_PT * 1.3;
/** Series colours (our choice: a blue and a red that stay apart in grey print), then grey. */
const SERIES = ['#1f5fa8', '#c0392b', '#666666'];
const g3 = (x: number) => Number(x.toPrecision(3)).toString();

interface Box {
  x: number;
  y: number;
  w: number;
  h: number;
}

/** One panel: frequency axis shared, y range from the values; returns the SVG and the x, y mappers. */
function panel(box: Box, xRange: [number, number], yValues: number[], yLabel: string, showX: boolean) {
  const finite = yValues.filter(Number.isFinite);
  let [lo, hi] = [Math.min(...finite), Math.max(...finite)];
  if (!(hi > lo)) [lo, hi] = [lo - 1, hi + 1];
  const pad = 0.05 * (hi - lo);
  [lo, hi] = [lo - pad, hi + pad];
  const labelW = lineMm(PT.label) + 7;
  const plot: Box = { x: box.x + labelW, y: box.y, w: box.w - labelW, h: box.h - (showX ? lineMm(PT.tick) + lineMm(PT.label) + 1.2 : 1) };
  if (plot.h < 10 || plot.w < 20)
    throw new FigureLayoutError(`the figure is too small for the band check's panels (${mm(plot.w)} × ${mm(plot.h)} mm each); make it larger`);
  const X = (f: number) => plot.x + ((f - xRange[0]) / (xRange[1] - xRange[0])) * plot.w;
  const Y = (v: number) => plot.y + plot.h - ((v - lo) / (hi - lo)) * plot.h;
  const parts: string[] = [
    `<rect x="${mm(plot.x)}" y="${mm(plot.y)}" width="${mm(plot.w)}" height="${mm(plot.h)}" fill="none" stroke="#333" stroke-width="0.15"/>`,
  ];
  for (const t of niceTicks(lo, hi, Math.max(2, Math.floor(plot.h / 10)))) {
    parts.push(`<line x1="${mm(plot.x - 0.8)}" x2="${mm(plot.x)}" y1="${mm(Y(t))}" y2="${mm(Y(t))}" stroke="#333" stroke-width="0.15"/>`);
    parts.push(textElement(String(t).replace('-', '−'), plot.x - 1, Y(t) + 0.35 * PT.tick * MM_PER_PT, PT.tick, { anchor: 'end' }));
  }
  parts.push(textElement(yLabel, box.x + lineMm(PT.label) * 0.8, plot.y + plot.h / 2, PT.label, { anchor: 'middle', rotate: -90 }));
  if (showX) {
    for (const t of niceTicks(xRange[0], xRange[1], Math.max(2, Math.floor(plot.w / 15)))) {
      parts.push(`<line x1="${mm(X(t))}" x2="${mm(X(t))}" y1="${mm(plot.y + plot.h)}" y2="${mm(plot.y + plot.h + 0.8)}" stroke="#333" stroke-width="0.15"/>`);
      parts.push(textElement(String(t), X(t), plot.y + plot.h + 0.8 + PT.tick * MM_PER_PT, PT.tick, { anchor: 'middle' }));
    }
    parts.push(textElement('frequency (Hz)', plot.x + plot.w / 2, box.y + box.h - 0.3 * lineMm(PT.label), PT.label, { anchor: 'middle' }));
  }
  return { svg: parts.join(''), X, Y, plot };
}

/** An SVG path through the finite points; a missing value breaks the line. */
function line(xs: number[], ys: number[], X: (f: number) => number, Y: (v: number) => number): string {
  let d = '';
  let pen = 'M';
  for (let i = 0; i < xs.length; i++) {
    if (!Number.isFinite(ys[i])) {
      pen = 'M';
      continue;
    }
    d += `${pen}${mm(X(xs[i]))} ${mm(Y(ys[i]))}`;
    pen = 'L';
  }
  return d;
}

function shading(r: BandCheckResult, X: (f: number) => number, plot: Box): string {
  const f = r.figure;
  const rect = (lo: number, hi: number, fill: string) =>
    `<rect x="${mm(X(lo))}" y="${mm(plot.y)}" width="${mm(X(hi) - X(lo))}" height="${mm(plot.h)}" fill="${fill}" fill-opacity="0.35"/>`;
  return (
    [f.lowerFlank, f.upperFlank]
      .filter((b) => b !== null)
      .map((b) => rect(b.loHz, b.hiHz, '#bbbbbb'))
      .join('') + rect(f.band.loHz, f.band.hiHz, '#f2d43d')
  );
}

export function bandCheckCaption(r: BandCheckResult): string {
  const c = r.contrast;
  const f = r.figure;
  const t = r.tests.raw;
  const stat = statisticLabel(c, t.statistic);
  const sig = f.clusters.filter((k) => k.p < FIGURE_ALPHA).length;
  const flanks = r.flanks.widthHz;
  return (
    `Above: mean log10 PSD (µV²/Hz) of the channel-averaged spectra (${r.channels.join(', ')}), dashed: mean aperiodic fit (fit range ${r.fitRangeHz.join('–')} Hz). ` +
    `Below: frequency-wise ${f.effect.kind === 'hedges-g' ? "Hedges' g" : f.effect.kind} (${stat}) with ${g3(t.level * 100)} % intervals; red bars: clusters with p < ${FIGURE_ALPHA} (${sig} of ${f.clusters.length}; cluster-forming p ${c.clusterP}). ` +
    `Yellow: ${r.band.name} ${r.band.loHz}–${r.band.hiHz} Hz; grey: ${flanks}-Hz flanks. Stage ${c.stage}, reference ${c.reference}, ${c.averaging} over epochs, ${c.fminHz}–${c.fmaxHz} Hz. ` +
    `Tests: ${t.exact ? `all ${t.permutations} relabellings` : `${t.permutations} permutations (seed ${r.seed})`}, Bonferroni over ${r.family.length} tests at α = ${r.alpha}. ` +
    `Verdict: ${r.verdict}. n: ${Object.entries(r.n)
      .map(([g, v]) => `${g} ${v}`)
      .join(', ')}.`
  );
}

/** The band check figure as standalone SVG text (UTF-8 XML), width and height in mm. */
export function bandCheckFigureSvg(r: BandCheckResult, o: FigureOptions): string {
  if (r.kind !== 'band-check' || !r.figure?.series) throw new FigureLayoutError('a band check figure needs a band-check result with its figure data');
  const f = r.figure;
  const W = o.widthMm;
  const H = o.heightMm;
  const inner = W - 2 * MARGIN_MM;
  const title = wrapText(`Band check of ${r.band.name} (${r.band.loHz}–${r.band.hiHz} Hz): ${designTitle(r.contrast)}`, PT.title, inner);
  const caption = wrapText(bandCheckCaption(r), PT.caption, inner);
  const legend = f.series.map((s, i) => ({ name: s.n === null ? s.name : `${s.name} (n = ${s.n})`, colour: SERIES[Math.min(i, SERIES.length - 1)] }));
  const topH = MARGIN_MM + title.length * lineMm(PT.title) + 1 + lineMm(PT.label) + 1;
  const captionH = caption.length * lineMm(PT.caption) + 2;
  const bodyH = H - topH - captionH - MARGIN_MM;
  if (bodyH < 30)
    throw new FigureLayoutError(`a ${W} × ${H} mm figure leaves ${mm(Math.max(0, bodyH))} mm for the panels after title and caption; make it taller`);
  const xRange: [number, number] = [f.freqsHz[0], f.freqsHz[f.freqsHz.length - 1]];
  const spectra = f.series.flatMap((s) => [...s.log10Psd, ...s.aperiodicLog10]);
  const eff = [...f.effect.ciLow, ...f.effect.ciHigh, 0];
  const upperH = bodyH * 0.55;
  const a = panel({ x: MARGIN_MM, y: topH, w: inner, h: upperH }, xRange, spectra, 'log10 PSD', false);
  const b = panel(
    { x: MARGIN_MM, y: topH + upperH + 1.5, w: inner, h: bodyH - upperH - 1.5 },
    xRange,
    eff,
    f.effect.kind === 'hedges-g' ? "Hedges' g" : f.effect.kind,
    true,
  );
  const parts: string[] = [shading(r, a.X, a.plot), shading(r, b.X, b.plot)];
  f.series.forEach((s, i) => {
    const colour = legend[i].colour;
    parts.push(`<path d="${line(f.freqsHz, s.log10Psd, a.X, a.Y)}" fill="none" stroke="${colour}" stroke-width="0.35"/>`);
    parts.push(`<path d="${line(f.freqsHz, s.aperiodicLog10, a.X, a.Y)}" fill="none" stroke="${colour}" stroke-width="0.3" stroke-dasharray="1.2 0.8"/>`);
  });
  const e = f.effect;
  const ci =
    e.freqsHz.map((x, i) => `${i === 0 ? 'M' : 'L'}${mm(b.X(x))} ${mm(b.Y(e.ciHigh[i]))}`).join('') +
    [...e.freqsHz]
      .reverse()
      .map((x, j) => `L${mm(b.X(x))} ${mm(b.Y(e.ciLow[e.freqsHz.length - 1 - j]))}`)
      .join('') +
    'Z';
  parts.push(`<path d="${ci}" fill="#888888" fill-opacity="0.3" stroke="none"/>`);
  parts.push(`<line x1="${mm(b.plot.x)}" x2="${mm(b.plot.x + b.plot.w)}" y1="${mm(b.Y(0))}" y2="${mm(b.Y(0))}" stroke="#333" stroke-width="0.15"/>`);
  parts.push(`<path d="${line(e.freqsHz, e.value, b.X, b.Y)}" fill="none" stroke="#111" stroke-width="0.35"/>`);
  for (const k of f.clusters.filter((k) => k.p < FIGURE_ALPHA))
    parts.push(
      `<rect x="${mm(b.X(k.fminHz))}" y="${mm(b.plot.y + b.plot.h - 1.2)}" width="${mm(Math.max(0.4, b.X(k.fmaxHz) - b.X(k.fminHz)))}" height="1.2" fill="#c0392b"/>`,
    );
  let lx = MARGIN_MM + 8;
  const ly = topH - 1.5;
  for (const s of legend) {
    parts.push(`<line x1="${mm(lx)}" x2="${mm(lx + 5)}" y1="${mm(ly - 0.8)}" y2="${mm(ly - 0.8)}" stroke="${s.colour}" stroke-width="0.5"/>`);
    parts.push(textElement(s.name, lx + 6, ly, PT.label));
    lx += 10 + s.name.length * 0.58 * PT.label * MM_PER_PT;
  }
  const captionTop = topH + bodyH + 1;
  return (
    '<?xml version="1.0" encoding="UTF-8"?>\n' +
    `<svg xmlns="http://www.w3.org/2000/svg" width="${mm(W)}mm" height="${mm(H)}mm" viewBox="0 0 ${mm(W)} ${mm(H)}" font-family="${escapeXml(FONT_FAMILY)}" fill="#111">\n` +
    `<rect width="${mm(W)}" height="${mm(H)}" fill="white"/>\n` +
    `<g>${title.map((l, i) => textElement(l, MARGIN_MM, MARGIN_MM + (i + 1) * lineMm(PT.title) - 0.3 * PT.title * MM_PER_PT, PT.title, { bold: true })).join('')}</g>\n` +
    `<g>${parts.join('')}${a.svg}${b.svg}</g>\n` +
    `<g>${caption.map((l, i) => textElement(l, MARGIN_MM, captionTop + (i + 1) * lineMm(PT.caption) - 0.3 * PT.caption * MM_PER_PT, PT.caption)).join('')}</g>\n` +
    '</svg>\n'
  );
}
