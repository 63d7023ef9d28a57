/**
 * A contrast result as a paper figure, written as SVG text: a title, the statistic as a channel ×
 * frequency image with the significant clusters outlined (or the scalp map of one band), a colour
 * bar whose label states the design and its direction, and a caption with the parameters
 * (caption.ts). The canvas is in millimetres (width and height in mm, viewBox in mm), text is
 * SVG text in points. The dashboard's export and `bandwise figure` both call contrastFigureSvg, so
 * the same result and options give the same file.
 */
import type { CompareResult } from '../contrast/run.ts';
import { channelPosition, projectToDisk } from '../montage/positions.ts';
import { colourBarLabel, FIGURE_ALPHA, figureCaption, figureTitle } from './caption.ts';
import { divergingColour } from './colour.ts';
import type { FigureOptions } from './options.ts';
import { escapeXml, FONT_FAMILY, MM_PER_PT, mm, textElement, textWidthMm, wrapText } from './svg-text.ts';

/** Type sizes, pt: title, axis labels and ticks, caption (common journal sizes: 6–9 pt). */
const PT = { title: 8, label: 7, tick: 6, caption: 6.5 } as const;
const MARGIN_MM = 3;
const LINE = 1.3; // line height, × font size

export class FigureLayoutError extends Error {
  override name = 'FigureLayoutError';
}

interface Box {
  x: number;
  y: number;
  w: number;
  h: number;
}

const lineMm = (pt: number) => pt * MM_PER_PT * LINE;

/** "Nice" ticks from lo to hi, about `count` of them (steps 1, 2 or 5 × 10^k). */
export function niceTicks(lo: number, hi: number, count: number): number[] {
  const raw = (hi - lo) / Math.max(1, count);
  const p = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * p).find((s) => s >= raw) ?? 10 * p;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step - 1e-9) * step; v <= hi + 1e-9 * step; v += step) out.push(Number(v.toPrecision(12)));
  return out;
}

/** The band a scalp map averages: the one asked for, else the smallest-p cluster's range, else every frequency. */
export function mapBand(r: CompareResult, asked: [number, number] | null): [number, number] {
  if (asked) return asked;
  const k = r.clusters[0];
  if (k) return [k.fminHz, k.fmaxHz];
  const f = r.statistics.freqsHz;
  return [f[0], f[f.length - 1]];
}

/** A horizontal colour bar over [−limit, limit] with ticks and its label below; returns the SVG and the height used. */
function colourBar(box: Box, limit: number, label: string): string {
  const barH = 2.5;
  const steps = 64;
  const parts: string[] = [];
  for (let i = 0; i < steps; i++) {
    const v = -limit + ((i + 0.5) / steps) * 2 * limit;
    parts.push(
      `<rect x="${mm(box.x + (i * box.w) / steps)}" y="${mm(box.y)}" width="${mm(box.w / steps + 0.05)}" height="${barH}" fill="${divergingColour(v, limit)}"/>`,
    );
  }
  parts.push(`<rect x="${mm(box.x)}" y="${mm(box.y)}" width="${mm(box.w)}" height="${barH}" fill="none" stroke="#333" stroke-width="0.15"/>`);
  for (const t of niceTicks(-limit, limit, 4)) {
    const x = box.x + ((t + limit) / (2 * limit)) * box.w;
    parts.push(`<line x1="${mm(x)}" x2="${mm(x)}" y1="${mm(box.y + barH)}" y2="${mm(box.y + barH + 0.8)}" stroke="#333" stroke-width="0.15"/>`);
    parts.push(textElement(String(t).replace('-', '−'), x, box.y + barH + 0.8 + PT.tick * MM_PER_PT, PT.tick, { anchor: 'middle' }));
  }
  const labelLines = wrapText(label, PT.label, box.w);
  labelLines.forEach((l, i) =>
    parts.push(textElement(l, box.x + box.w / 2, box.y + barH + 1 + lineMm(PT.tick) + (i + 1) * lineMm(PT.label), PT.label, { anchor: 'middle' })),
  );
  return parts.join('');
}

const colourBarHeight = (label: string, w: number) => 2.5 + 1 + lineMm(PT.tick) + wrapText(label, PT.label, w).length * lineMm(PT.label) + 1;

/** The colour scale's limit: the largest |statistic| (at least 1) rounded up to 2 significant digits. */
function limitOf(values: readonly (number | null)[]): number {
  let m = 1;
  for (const v of values) if (v !== null && Number.isFinite(v)) m = Math.max(m, Math.abs(v));
  const p = 10 ** (Math.floor(Math.log10(m)) - 1);
  return Number((Math.ceil(m / p - 1e-9) * p).toPrecision(12));
}

/** Cell edges along frequency: midpoints between neighbouring bins, half a step beyond the ends. */
function binEdges(f: readonly number[]): number[] {
  if (f.length === 1) return [f[0] - 0.5, f[0] + 0.5];
  const e = [f[0] - (f[1] - f[0]) / 2];
  for (let i = 0; i < f.length - 1; i++) e.push((f[i] + f[i + 1]) / 2);
  e.push(f[f.length - 1] + (f[f.length - 1] - f[f.length - 2]) / 2);
  return e;
}

/** The channel × frequency image with the significant clusters outlined, its axes and their labels. */
function statisticImage(r: CompareResult, box: Box, limit: number): string {
  const s = r.statistics;
  const F = s.freqsHz.length;
  const C = s.channels.length;
  const edges = binEdges(s.freqsHz);
  const labelW = Math.max(...s.channels.map((c) => textWidthMm(c, PT.tick))) + 1.5;
  const plot: Box = { x: box.x + labelW, y: box.y, w: box.w - labelW, h: box.h - lineMm(PT.tick) - lineMm(PT.label) - 1.2 };
  if (plot.w < 20 || plot.h < 10) throw new FigureLayoutError(`the figure is too small for the image (${mm(plot.w)} × ${mm(plot.h)} mm left); make it larger`);
  const X = (f: number) => plot.x + ((f - edges[0]) / (edges[F] - edges[0])) * plot.w;
  const rowH = plot.h / C;
  const parts: string[] = ['<g shape-rendering="crispEdges">'];
  for (let ch = 0; ch < C; ch++)
    for (let f = 0; f < F; f++) {
      const x1 = X(edges[f]);
      const x2 = X(edges[f + 1]);
      parts.push(
        `<rect x="${mm(x1)}" y="${mm(plot.y + ch * rowH)}" width="${mm(x2 - x1 + 0.02)}" height="${mm(rowH + 0.02)}" fill="${divergingColour(s.stat[ch * F + f], limit)}"/>`,
      );
    }
  parts.push('</g>');
  // outlines: the edges of a cluster's cells that border a cell outside it
  const d: string[] = [];
  for (const k of s.clusters.filter((k) => k.p < FIGURE_ALPHA)) {
    const inside = new Set(k.points);
    for (const p of k.points) {
      const ch = Math.floor(p / F);
      const f = p % F;
      const [x1, x2, y1, y2] = [X(edges[f]), X(edges[f + 1]), plot.y + ch * rowH, plot.y + (ch + 1) * rowH];
      if (f === 0 || !inside.has(p - 1)) d.push(`M${mm(x1)} ${mm(y1)}V${mm(y2)}`);
      if (f === F - 1 || !inside.has(p + 1)) d.push(`M${mm(x2)} ${mm(y1)}V${mm(y2)}`);
      if (!inside.has(p - F)) d.push(`M${mm(x1)} ${mm(y1)}H${mm(x2)}`);
      if (!inside.has(p + F)) d.push(`M${mm(x1)} ${mm(y2)}H${mm(x2)}`);
    }
  }
  if (d.length > 0) parts.push(`<path d="${d.join('')}" fill="none" stroke="#111" stroke-width="0.45" stroke-linecap="square"/>`);
  parts.push(`<rect x="${mm(plot.x)}" y="${mm(plot.y)}" width="${mm(plot.w)}" height="${mm(plot.h)}" fill="none" stroke="#333" stroke-width="0.15"/>`);
  s.channels.forEach((c, i) => parts.push(textElement(c, plot.x - 0.8, plot.y + (i + 0.5) * rowH + 0.35 * PT.tick * MM_PER_PT, PT.tick, { anchor: 'end' })));
  const ticks = niceTicks(edges[0], edges[F], Math.max(2, Math.floor(plot.w / 15)));
  for (const t of ticks) {
    const x = X(t);
    parts.push(`<line x1="${mm(x)}" x2="${mm(x)}" y1="${mm(plot.y + plot.h)}" y2="${mm(plot.y + plot.h + 0.8)}" stroke="#333" stroke-width="0.15"/>`);
    parts.push(textElement(String(t), x, plot.y + plot.h + 0.8 + PT.tick * MM_PER_PT, PT.tick, { anchor: 'middle' }));
  }
  parts.push(textElement('frequency (Hz)', plot.x + plot.w / 2, box.y + box.h - 0.3 * lineMm(PT.label), PT.label, { anchor: 'middle' }));
  return parts.join('');
}

/** Inverse-distance weighted value at (x, y): Σ wᵢ vᵢ / Σ wᵢ with wᵢ = 1 / dᵢ² (Shepard 1968). */
function idw(points: readonly { x: number; y: number; v: number }[], x: number, y: number): number {
  let num = 0;
  let den = 0;
  for (const p of points) {
    const d2 = (p.x - x) ** 2 + (p.y - y) ** 2;
    if (d2 < 1e-12) return p.v;
    num += p.v / d2;
    den += 1 / d2;
  }
  return num / den;
}

/** The scalp map of the mean statistic over a band: interpolated disk, head outline, electrodes (cluster channels ringed). */
function scalpMap(r: CompareResult, box: Box, limit: number, band: [number, number], values: { channel: string; x: number; y: number; v: number }[]): string {
  const R = Math.min(box.w, box.h) / 2 / 1.12; // room for nose and ears
  if (R < 8) throw new FigureLayoutError(`the figure is too small for the scalp map (${mm(2 * R)} mm across); make it larger`);
  const cx = box.x + box.w / 2;
  const cy = box.y + box.h / 2;
  const ringed = new Set(r.clusters.filter((k) => k.p < FIGURE_ALPHA && k.fminHz <= band[1] && k.fmaxHz >= band[0]).flatMap((k) => k.channels));
  const N = 64;
  const cell = (2 * R) / N;
  const parts: string[] = [
    `<clipPath id="head"><circle cx="${mm(cx)}" cy="${mm(cy)}" r="${mm(R)}"/></clipPath>`,
    '<g clip-path="url(#head)" shape-rendering="crispEdges">',
  ];
  for (let i = 0; i < N; i++)
    for (let j = 0; j < N; j++) {
      const ux = -1 + (i + 0.5) * (2 / N);
      const uy = 1 - (j + 0.5) * (2 / N);
      if (Math.hypot(ux, uy) > 1 + 2 / N) continue;
      parts.push(
        `<rect x="${mm(cx - R + i * cell)}" y="${mm(cy - R + j * cell)}" width="${mm(cell + 0.02)}" height="${mm(cell + 0.02)}" fill="${divergingColour(idw(values, ux, uy), limit)}"/>`,
      );
    }
  parts.push('</g>');
  const nose = `M${mm(cx - 0.12 * R)} ${mm(cy - 0.99 * R)}L${mm(cx)} ${mm(cy - 1.1 * R)}L${mm(cx + 0.12 * R)} ${mm(cy - 0.99 * R)}`;
  parts.push(`<circle cx="${mm(cx)}" cy="${mm(cy)}" r="${mm(R)}" fill="none" stroke="#111" stroke-width="0.3"/>`);
  parts.push(`<path d="${nose}" fill="none" stroke="#111" stroke-width="0.3"/>`);
  for (const side of [-1, 1])
    parts.push(
      `<ellipse cx="${mm(cx + side * 1.04 * R)}" cy="${mm(cy)}" rx="${mm(0.04 * R)}" ry="${mm(0.14 * R)}" fill="none" stroke="#111" stroke-width="0.3"/>`,
    );
  for (const e of values) {
    const x = cx + e.x * R;
    const y = cy - e.y * R;
    parts.push(
      `<circle cx="${mm(x)}" cy="${mm(y)}" r="${ringed.has(e.channel) ? 0.9 : 0.45}" fill="${ringed.has(e.channel) ? 'white' : '#111'}" stroke="#111" stroke-width="0.3"/>`,
    );
    parts.push(textElement(e.channel, x, y - 1.2, PT.tick, { anchor: 'middle' }));
  }
  return parts.join('');
}

/** Each channel's mean statistic over the band's bins, at its position on the disk (channels without a position are left off). */
function bandValues(r: CompareResult, band: [number, number]): { channel: string; x: number; y: number; v: number }[] {
  const s = r.statistics;
  const F = s.freqsHz.length;
  const bins = s.freqsHz.map((f, i) => ({ f, i })).filter(({ f }) => f >= band[0] && f <= band[1]);
  if (bins.length === 0)
    throw new FigureLayoutError(`no frequency of the result lies in ${band[0]}–${band[1]} Hz (the result covers ${s.freqsHz[0]}–${s.freqsHz[F - 1]} Hz)`);
  const out: { channel: string; x: number; y: number; v: number }[] = [];
  s.channels.forEach((channel, ch) => {
    const p = r.channelLayout?.positions?.[ch] ?? channelPosition(channel);
    const vals = bins.map(({ i }) => s.stat[ch * F + i]).filter((v) => v !== null && Number.isFinite(v));
    if (!p || vals.length === 0) return;
    const d = projectToDisk(p);
    out.push({ channel, x: d.x, y: d.y, v: vals.reduce((a, b) => a + b, 0) / vals.length });
  });
  if (out.length < 2) throw new FigureLayoutError(`a scalp map needs at least 2 channels with a known position, the result has ${out.length}`);
  return out;
}

/** The figure as standalone SVG text (UTF-8 XML), width and height in mm. */
export function contrastFigureSvg(r: CompareResult, o: FigureOptions): string {
  if (r.kind !== 'compare' || !Array.isArray(r.statistics?.stat))
    throw new FigureLayoutError('a figure needs a compare result with its statistics (the result JSON of a contrast)');
  const W = o.widthMm;
  const H = o.heightMm;
  const inner = W - 2 * MARGIN_MM;
  const band = mapBand(r, o.bandHz);
  const title = wrapText(figureTitle(r, o.kind, band), PT.title, inner);
  const caption = wrapText(figureCaption(r, o.kind, band), PT.caption, inner);
  const barLabel = colourBarLabel(r, o.kind, band);
  const barW = Math.min(inner * 0.6, 90);
  const topH = MARGIN_MM + title.length * lineMm(PT.title) + 1.5;
  const captionH = caption.length * lineMm(PT.caption) + 1;
  const barH = colourBarHeight(barLabel, barW);
  const body: Box = { x: MARGIN_MM, y: topH, w: inner, h: H - topH - barH - captionH - MARGIN_MM - 2 };
  if (body.h < 15)
    throw new FigureLayoutError(
      `a ${W} × ${H} mm figure leaves ${mm(Math.max(0, body.h))} mm for the plot after title, colour bar and caption; make it taller`,
    );
  const values = o.kind === 'scalp-map' ? bandValues(r, band) : null;
  const limit = limitOf(values ? values.map((e) => e.v) : r.statistics.stat);
  const plot = values ? scalpMap(r, body, limit, band, values) : statisticImage(r, body, limit);
  const barBox: Box = { x: MARGIN_MM + (inner - barW) / 2, y: body.y + body.h + 2, w: barW, h: barH };
  const captionTop = barBox.y + barH;
  return (
    '<?xml version="1.0" encoding="UTF-8"?>\n' +
    `<svg xmlns="http://www.w3.org/2000/svg" width="${mm(W)}mm" height="${mm(H)}mm" viewBox="0 0 ${mm(W)} ${mm(H)}" font-family="${escapeXml(FONT_FAMILY)}" fill="#111">\n` +
    `<rect width="${mm(W)}" height="${mm(H)}" fill="white"/>\n` +
    `<g>${title.map((l, i) => textElement(l, MARGIN_MM, MARGIN_MM + (i + 1) * lineMm(PT.title) - 0.3 * PT.title * MM_PER_PT, PT.title, { bold: true })).join('')}</g>\n` +
    `<g>${plot}</g>\n` +
    `<g>${colourBar(barBox, limit, barLabel)}</g>\n` +
    `<g>${caption.map((l, i) => textElement(l, MARGIN_MM, captionTop + (i + 1) * lineMm(PT.caption) - 0.3 * PT.caption * MM_PER_PT, PT.caption)).join('')}</g>\n` +
    '</svg>\n'
  );
}
