/**
 * Paper figures of a contrast result (src/core/figure, `bandwise figure`, the dashboard's export):
 * the SVG's printed size and viewBox in mm, the caption's parameters, text kept as SVG text, the
 * PNG's pixel size and resolution chunk, and one SVG for the command line and the dashboard.
 * Size: one compare of 7 channels × 59 bins, 2 × 14 subjects, 200 permutations (about a second).
 */
import { spawnSync } from 'node:child_process';
import { readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CompareResult } from '../../src/core/contrast/run.ts';
import { contrastFigureSvg, figureOptions, FigureOptionError, pixelSize } from '../../src/core/figure/index.ts';
import { paperFigureSvg } from '../../src/dashboard/export/paper-figure.ts';
import { runPython } from '../helpers/python.ts';
import { figureResult, writeResultFile } from './fixture.ts';
import { fixedResults } from '../report/inputs.ts';

const repo = fileURLToPath(new URL('../..', import.meta.url));
const cli = (...args: string[]) =>
  spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), 'figure', ...args], { encoding: 'utf8' });

let result: CompareResult;
let dir: string;
let file: string;
beforeAll(() => {
  result = figureResult();
  ({ dir, file } = writeResultFile(result));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** The SVG read by Python's XML parser (xml.etree, outside the project): root attributes and every text element's text. */
function parseSvg(svg: string): { width: string; height: string; viewBox: string; texts: string[]; images: number } {
  const script = `import xml.etree.ElementTree as ET\nroot = ET.fromstring(open(inputs_file, 'rb').read())\nns = '{http://www.w3.org/2000/svg}'\nprint(json.dumps({'width': root.get('width'), 'height': root.get('height'), 'viewBox': root.get('viewBox'), 'texts': [t.text for t in root.iter(ns + 'text')], 'images': len(list(root.iter(ns + 'image')))}))`;
  const f = path.join(dir, 'parse.svg');
  writeFileSync(f, svg);
  return runPython(`inputs_file = ${JSON.stringify(f)}\n${script}`);
}

/** Width, height (IHDR) and pixels per metre (pHYs) of a PNG, read as the PNG specification lays them out (W3C PNG, 11.2.2 IHDR, 11.3.5.3 pHYs). */
function pngFacts(png: Buffer): { width: number; height: number; perMetre: number | null; unit: number | null } {
  expect([...png.subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]); // PNG signature (spec 5.2)
  expect(png.subarray(12, 16).toString('latin1')).toBe('IHDR');
  let perMetre: number | null = null;
  let unit: number | null = null;
  for (let at = 8; at < png.length;) {
    const len = png.readUInt32BE(at);
    if (png.subarray(at + 4, at + 8).toString('latin1') === 'pHYs') {
      perMetre = png.readUInt32BE(at + 8);
      expect(png.readUInt32BE(at + 12)).toBe(perMetre);
      unit = png[at + 16];
    }
    at += 12 + len;
  }
  return { width: png.readUInt32BE(16), height: png.readUInt32BE(20), perMetre, unit };
}

describe('figure SVG', () => {
  it('has the printed size in mm and a viewBox in mm', () => {
    const svg = contrastFigureSvg(result, figureOptions({ widthMm: 174, heightMm: 95.5 }));
    const p = parseSvg(svg);
    expect(p.width).toBe('174mm');
    expect(p.height).toBe('95.5mm');
    expect(p.viewBox).toBe('0 0 174 95.5');
  });

  it('states every parameter in its caption, and keeps text as SVG text (no embedded images)', () => {
    const svg = contrastFigureSvg(result, figureOptions({}));
    const p = parseSvg(svg);
    expect(p.images).toBe(0);
    // the caption and title are wrapped over several text elements: joined with spaces they read as one text
    const text = p.texts.join(' ');
    const s = result.statistics;
    // the cluster-forming threshold: scipy's t quantile at the result's df (scipy.stats.t.isf, outside reference), to 3 digits
    const tScipy = runPython<number>(`from scipy import stats\nprint(json.dumps(float(stats.t.isf(0.025, ${s.threshold.df}))))`);
    expect(text).toContain(`|t| > ${Number(tScipy.toPrecision(3))}`);
    expect(text).toContain('two-tailed p 0.05');
    expect(text).toContain('Measure log10 PSD');
    expect(text).toContain('stage N2');
    expect(text).toContain('Welch t, patient − control'); // design and direction (groups[1] − groups[0])
    expect(text).toContain('cluster mass (Maris & Oostenveld 2007)');
    expect(text).toContain('200 permutations (seed 5)');
    expect(text).toContain('n: control 14, patient 14');
    expect(text).toContain('reference recorded, mean over epochs');
    // the colour bar's own label states the design and direction, and the 7 channels are labelled
    expect(p.texts).toContain('Welch t, patient − control');
    for (const ch of s.channels) expect(p.texts).toContain(ch);
    // one significant cluster (12–15 Hz, planted by the fixture) is outlined
    expect(result.clusters.filter((k) => k.p < 0.05).length).toBe(1);
    expect(text).toContain('outlined: clusters with p < 0.05 (1 of 1)');
    expect(svg).toMatch(/<path d="M[^"]+" fill="none" stroke="#111"/);
  });

  it('draws the scalp map of the asked band with its band in the colour bar label', () => {
    const p = parseSvg(contrastFigureSvg(result, figureOptions({ kind: 'scalp-map', bandHz: [12, 15], widthMm: 90, heightMm: 110 })));
    expect(p.texts.join(' ')).toContain('mean Welch t, patient − control, 12–15 Hz');
    expect(p.texts.join(' ')).toContain('ringed: channels of clusters with p < 0.05');
  });

  it('refuses a size, dpi or kind out of range, naming the value', () => {
    expect(() => figureOptions({ widthMm: 10 })).toThrow(/width must be a number from 30 to 600 mm, got 10/);
    expect(() => figureOptions({ dpi: 5000 })).toThrow(FigureOptionError);
    expect(() => figureOptions({ kind: 'pie' as never })).toThrow(/figure kind must be one of statistic-map, scalp-map, got "pie"/);
  });
});

describe('bandwise figure', () => {
  it('writes a PNG round(width_mm / 25.4 × dpi) pixels wide, with the dpi in its pHYs chunk', () => {
    const out = path.join(dir, 'f.png');
    const r = cli(file, '--out', out, '--width-mm', '85', '--height-mm', '100', '--dpi', '600');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const f = pngFacts(readFileSync(out));
    // 85 mm / 25.4 mm per inch × 600 dpi = 2007.87 → 2008; 100 mm → 2362.20 → 2362
    expect(f.width).toBe(2008);
    expect(f.height).toBe(2362);
    expect(pixelSize({ widthMm: 85, heightMm: 100, dpi: 600 })).toEqual({ width: 2008, height: 2362 });
    // 600 dpi = 600 / 0.0254 = 23622.05 pixels per metre, unit 1 = metre (PNG spec 11.3.5.3)
    expect(f.perMetre).toBe(23622);
    expect(f.unit).toBe(1);
  });

  it('writes the same SVG as the dashboard exports for the same result and settings', () => {
    const out = path.join(dir, 'f.svg');
    const r = cli(file, '--out', out, '--kind', 'scalp-map', '--band', '11-16', '--width-mm', '120', '--height-mm', '140');
    expect(r.status).toBe(0);
    const fromJson = JSON.parse(readFileSync(file, 'utf8')) as CompareResult;
    const dashboard = paperFigureSvg(fromJson, { kind: 'scalp-map', bandHz: [11, 16], widthMm: 120, heightMm: 140, format: 'svg' });
    expect(readFileSync(out, 'utf8')).toBe(dashboard);
  });

  it('refuses a bad option in one line with status 2', () => {
    const r = cli(file, '--out', path.join(dir, 'x.png'), '--format', 'svg');
    expect(r.status).toBe(2);
    expect(r.stderr.trim()).toBe('bandwise figure: --out ends in .png but the format is svg');
  });
});

describe('band check figure', () => {
  // the report tests' band check (tests/report/inputs.ts: 2 × 20 simulated subjects, sigma 12–16 Hz, 200 permutations)
  const { check } = fixedResults();

  it('writes the same SVG from the command line as the dashboard, with its size in mm and its parameters, and refuses --kind', () => {
    const file = path.join(dir, 'band-check.json');
    writeFileSync(file, JSON.stringify(check));
    const out = path.join(dir, 'band.svg');
    const r = cli(file, '--out', out, '--width-mm', '170', '--height-mm', '130');
    expect(r.status, r.stderr).toBe(0);
    const svg = readFileSync(out, 'utf8');
    expect(svg).toBe(paperFigureSvg(JSON.parse(readFileSync(file, 'utf8')), { widthMm: 170, heightMm: 130 }));
    const p = parseSvg(svg);
    expect([p.width, p.height, p.viewBox]).toEqual(['170mm', '130mm', '0 0 170 130']);
    const text = p.texts.join(' ');
    expect(text).toContain('Band check of sigma (12–16 Hz): N2, patient − control');
    expect(text).toContain('Welch t, patient − control');
    expect(text).toContain('200 permutations (seed 5)');
    expect(text).toContain(`Bonferroni over ${check.family.length} tests at α = 0.05`);
    expect(text).toContain(`Verdict: ${check.verdict}.`);
    expect(text).toContain('n: control 20, patient 20');
    const refused = cli(file, '--out', path.join(dir, 'b.svg'), '--kind', 'scalp-map');
    expect(refused.status).toBe(2);
    expect(refused.stderr).toMatch(/--kind applies to a compare result only/);
  });
});
