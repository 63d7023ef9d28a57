/**
 * `bandwise compare <cohort.duckdb> (--contrast contrast.json | options) --out result.json`
 * Runs one contrast headless: the same contrast JSON the dashboard saves, the same engine.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { Command, InvalidArgumentError } from 'commander';
import type { CompareRun } from '../analysis/compare-runner.ts';
import { addContrastOptions, contrastOrExit, type Flags } from './contrast-options.ts';

const threadCount = (v: string) => {
  const x = Number(v);
  if (!(Number.isInteger(x) && x >= 1)) throw new InvalidArgumentError(`invalid --threads: ${v} (a whole number ≥ 1)`);
  return x;
};

/** Clusters as TSV: one row per cluster, signs groups[1] − groups[0]. */
export function clustersTsv(r: CompareRun): string {
  const lines = ['cluster\tsign\tmass\tsize\tp\tfmin_hz\tfmax_hz\tchannels'];
  r.clusters.forEach((k, i) => lines.push([i + 1, k.sign, k.mass.toFixed(4), k.size, k.p.toPrecision(4), k.fminHz, k.fmaxHz, k.channels.join(',')].join('\t')));
  return lines.join('\n') + '\n';
}

/** Per point statistics as TSV: channel, frequency, t, df, uncorrected p, effect and interval, cluster. */
export function pointsTsv(r: CompareRun): string {
  const s = r.statistics;
  const F = s.freqsHz.length;
  const clusterOf = new Int32Array(s.stat.length);
  s.clusters.forEach((k, i) => k.points.forEach((p) => (clusterOf[p] = i + 1)));
  const lines = [`channel\tfreq_hz\tstat\tdf\tp_uncorrected\t${s.effect.kind}\tci_low\tci_high\tcluster${s.tfce ? '\ttfce\tp_tfce' : ''}`];
  for (let p = 0; p < s.stat.length; p++) {
    const df = Array.isArray(s.df) ? s.df[p] : s.df;
    const row = [s.channels[Math.floor(p / F)], s.freqsHz[p % F], s.stat[p].toFixed(5), Number(df).toFixed(3), s.pUncorrected[p].toPrecision(5), s.effect.value[p].toFixed(5), s.effect.ciLow[p].toFixed(5), s.effect.ciHigh[p].toFixed(5), clusterOf[p] || ''];
    if (s.tfce) row.push(s.tfce.score[p].toFixed(4), s.tfce.pCorrected[p].toPrecision(4));
    lines.push(row.join('\t'));
  }
  return lines.join('\n') + '\n';
}

export function register(program: Command): void {
  const command = program
    .command('compare')
    .description(
      'Runs a contrast over channels × frequencies on a bandwise database: a point statistic per channel and ' +
        'frequency (Welch t by default), cluster-based permutation correction (Maris & Oostenveld 2007) or TFCE ' +
        '(Smith & Nichols 2009). Options override the keys of --contrast. Signs are groups[1] minus groups[0] ' +
        '(paired: second minus first). Writes the full result (every parameter and the seed) as JSON. ' +
        'A research tool: results are not a diagnosis.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) written by `bandwise ingest`')
    .requiredOption('--out <file>', 'result JSON to write')
    .option('--tsv <file>', 'cluster table as TSV')
    .option('--points-tsv <file>', 'per-point statistics (t, df, p, effect size with interval, cluster) as TSV')
    .option('--threads <n>', 'threads for the permutations (default: one per core for a large contrast, else 1); the result is the same', threadCount);
  addContrastOptions(command, { bandMeasures: true });
  command
    .action(async (database: string, flags: Flags) => {
      // loaded on use: `bandwise --help` reads none of the analysis code
      const { default: cliProgress } = await import('cli-progress');
      const { parseExclusionsTsv } = await import('../core/contrast/exclusions.ts');
      const { compareDatabase } = await import('../analysis/compare-runner.ts');
      const { appendLedger } = await import('../analysis/ledger.ts');
      const { reportUserError } = await import('./user-errors.ts');
      const contrast = contrastOrExit(flags);
      if (!contrast) return;
      const exclusions = flags.exclusions ? parseExclusionsTsv(readFileSync(flags.exclusions, 'utf8'), flags.exclusions) : [];
      const bar = !flags.quiet && process.stderr.isTTY ? new cliProgress.SingleBar({ format: 'permutations {bar} {value}/{total} | ETA {eta_formatted}', stream: process.stderr }, cliProgress.Presets.shades_classic) : null;
      let started = false;
      let result: CompareRun;
      try {
        result = await compareDatabase(database, contrast, exclusions, (done, total) => {
          if (!bar) return;
          if (!started) {
            bar.start(total, 0);
            started = true;
          }
          bar.update(done);
        }, flags.run, { threads: flags.threads });
      } catch (e) {
        bar?.stop();
        if (reportUserError('compare', e)) return;
        throw e;
      }
      bar?.stop();
      writeFileSync(flags.out, JSON.stringify(result, null, 2) + '\n');
      if (flags.tsv) writeFileSync(flags.tsv, clustersTsv(result));
      if (flags.pointsTsv) writeFileSync(flags.pointsTsv, pointsTsv(result));
      if (flags.ledger !== false) appendLedger(flags.ledger ?? `${database}.ledger.jsonl`, database, result);
      const n = Object.entries(result.n).map(([k, v]) => `${k} ${v}`).join(', ');
      const best = result.clusters[0];
      console.log(`${result.measure}; n: ${n}; excluded: ${result.exclusions.length}; clusters: ${result.clusters.length}` + (best ? `; best p = ${best.p.toPrecision(3)} (${best.sign > 0 ? '+' : '−'}, ${best.fminHz}–${best.fmaxHz} Hz, ${best.channels.join(',')})` : ''));
      for (const note of result.notes) console.log(note);
      console.log(`wrote ${flags.out}`);
    });
}
