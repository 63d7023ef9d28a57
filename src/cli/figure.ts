/**
 * `bandwise figure <result.json> --out figure.svg [--kind statistic-map|scalp-map] [--band 12-15]
 * [--width-mm 180] [--height-mm 120] [--dpi 300] [--format svg|png]`
 * The paper figure of a saved compare result, as the dashboard exports it: title, statistic image
 * or scalp map, colour bar stating the design and direction, and a caption with the parameters.
 */
import type { Command } from 'commander';
import { FIGURE_DEFAULTS, FIGURE_KINDS, FIGURE_LIMITS } from '../core/figure/options.ts';

interface FigureFlags {
  out: string;
  kind?: string;
  band?: string;
  widthMm?: string;
  heightMm?: string;
  dpi?: string;
  format?: string;
}

export function register(program: Command): void {
  const d = FIGURE_DEFAULTS;
  const L = FIGURE_LIMITS;
  program
    .command('figure')
    .description(
      'Draws a compare result (the JSON of `bandwise compare --out`) as a paper figure: a title, the statistic over channels × ' +
        'frequencies with significant clusters outlined (or the scalp map of one band), a colour bar whose label states the design ' +
        'and direction, and a caption with measure, stage, design, correction, threshold, permutations and n per group. A band-check ' +
        'result is drawn as its mean spectra with aperiodic fits above the frequency-wise effect size, with the verdict. Text stays ' +
        'text in SVG; PNG is rendered at the chosen dpi (DejaVu Sans, Debian package fonts-dejavu-core). The dashboard exports the same SVG.',
    )
    .argument('<result>', 'result JSON written by `bandwise compare` or `bandwise band-check`')
    .requiredOption('--out <file>', 'figure file to write (.svg or .png)')
    .option('--kind <kind>', `compare results: ${FIGURE_KINDS.join(' or ')} (default: ${d.kind})`)
    .option(
      '--band <lo-hi>',
      'compare results, scalp map: the band averaged, Hz, e.g. 12-15 (default: the range of the cluster with the smallest p, else every frequency)',
    )
    .option('--width-mm <mm>', `printed width, mm, ${L.minMm}–${L.maxMm} (default: ${d.widthMm})`)
    .option('--height-mm <mm>', `printed height, mm, ${L.minMm}–${L.maxMm} (default: ${d.heightMm})`)
    .option('--dpi <dpi>', `PNG resolution, dots per inch, ${L.minDpi}–${L.maxDpi} (default: ${d.dpi}); the PNG is round(width-mm / 25.4 × dpi) pixels wide`)
    .option('--format <format>', 'svg or png (default: from the --out extension, else svg)')
    .action(async (resultFile: string, flags: FigureFlags) => {
      const { figureOptions, parseBandHz, FigureOptionError, FigureLayoutError } = await import('../core/figure/index.ts');
      const { writeFigure } = await import('../analysis/figure-file.ts');
      const { ReportFileError } = await import('../analysis/write-report.ts');
      const { reportUserError } = await import('./user-errors.ts');
      const number = (v: string | undefined) => (v === undefined ? undefined : Number(v));
      try {
        const ext = /\.(svg|png)$/i.exec(flags.out)?.[1].toLowerCase();
        const o = figureOptions({
          kind: flags.kind as never,
          bandHz: flags.band === undefined ? null : parseBandHz(flags.band),
          widthMm: number(flags.widthMm),
          heightMm: number(flags.heightMm),
          dpi: number(flags.dpi),
          format: (flags.format ?? ext ?? 'svg') as never,
        });
        if (ext && ext !== o.format) throw new FigureOptionError(`--out ends in .${ext} but the format is ${o.format}`);
        const asked = [flags.kind !== undefined ? '--kind' : '', flags.band !== undefined ? '--band' : ''].filter(Boolean);
        const r = await writeFigure(resultFile, o, flags.out, asked);
        console.log(`wrote ${flags.out} (${o.widthMm} × ${o.heightMm} mm${r.pixels ? `, ${r.pixels.width} × ${r.pixels.height} px at ${o.dpi} dpi` : ''})`);
        if (r.warning) console.error(`bandwise figure: ${r.warning}`);
      } catch (e) {
        if (e instanceof FigureOptionError || e instanceof ReportFileError) {
          console.error(`bandwise figure: ${e.message}`);
          process.exitCode = 2;
          return;
        }
        if (e instanceof FigureLayoutError) {
          console.error(`bandwise figure: ${e.message}`);
          process.exitCode = 1;
          return;
        }
        if (reportUserError('figure', e)) return;
        throw e;
      }
    });
}
