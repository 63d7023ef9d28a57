/**
 * `bandwise compare <cohort.duckdb> (--contrast contrast.json | options) --out result.json`
 * Runs one contrast headless: the same contrast JSON the dashboard saves, the same engine.
 */
import { Command, InvalidArgumentError } from 'commander';
import type { CompareRun } from '../analysis/compare-runner.ts';
import { CLUSTER_TABLE_COLUMNS, clusterTable, SINGLE_POINT_MAX_P } from '../core/contrast/cluster-table.ts';
import { toTsv } from '../core/report/tsv.ts';
import { refuseClashes, writeFileReplacing } from '../files/output-files.ts';
import { addContrastOptions, contrastOrExit, readExclusions, type Flags } from './contrast-options.ts';

const threadCount = (v: string) => {
  const x = Number(v);
  if (!(Number.isInteger(x) && x >= 1)) throw new InvalidArgumentError(`invalid --threads: ${v} (a whole number ≥ 1)`);
  return x;
};

/** Clusters as TSV, as the dashboard's cluster table (src/core/contrast/cluster-table.ts): signs groups[1] − groups[0]. */
export function clustersTsv(r: CompareRun, singlePoints: boolean): string {
  return toTsv(CLUSTER_TABLE_COLUMNS, clusterTable(r, { singlePoints }).rows);
}

/** A number for a TSV field; a missing value (NaN: a point left out for too few values) is NA, as R and pandas read it. */
const field = (x: number, write: (v: number) => string): string => (Number.isNaN(x) ? 'NA' : write(x));
const fixed = (k: number) => (v: number) => v.toFixed(k);
const precise = (k: number) => (v: number) => v.toPrecision(k);

/** Per point statistics as TSV: channel, frequency, t, df, uncorrected p, effect and interval, cluster; missing values NA. */
export function pointsTsv(r: CompareRun): string {
  const s = r.statistics;
  const F = s.freqsHz.length;
  const clusterOf = new Int32Array(s.stat.length);
  s.clusters.forEach((k, i) => k.points.forEach((p) => (clusterOf[p] = i + 1)));
  const lines = [`channel\tfreq_hz\tstat\tdf\tp_uncorrected\t${s.effect.kind}\tci_low\tci_high\tcluster${s.tfce ? '\ttfce\tp_tfce' : ''}`];
  for (let p = 0; p < s.stat.length; p++) {
    const df = Array.isArray(s.df) ? s.df[p] : s.df;
    const row = [
      s.channels[Math.floor(p / F)],
      s.freqsHz[p % F],
      field(s.stat[p], fixed(5)),
      field(Number(df), fixed(3)),
      field(s.pUncorrected[p], precise(5)),
      field(s.effect.value[p], fixed(5)),
      field(s.effect.ciLow[p], fixed(5)),
      field(s.effect.ciHigh[p], fixed(5)),
      clusterOf[p] || '',
    ];
    if (s.tfce) row.push(field(s.tfce.score[p], fixed(4)), field(s.tfce.pCorrected[p], precise(4)));
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
    .option(
      '--tsv <file>',
      `cluster table as TSV (the dashboard's columns; clusters of one point with p > ${SINGLE_POINT_MAX_P} left out unless --single-point-clusters)`,
    )
    .option('--single-point-clusters', `list clusters of one point (one channel, one frequency bin) with p > ${SINGLE_POINT_MAX_P} in --tsv too`)
    .option('--points-tsv <file>', 'per-point statistics (t, df, p, effect size with interval, cluster) as TSV')
    .option('--threads <n>', 'threads for the permutations (default: one per core for a large contrast, else 1); the result is the same', threadCount);
  addContrastOptions(command, { bandMeasures: true });
  command.action(async (database: string, flags: Flags) => {
    // loaded on use: `bandwise --help` reads none of the analysis code
    const { default: cliProgress } = await import('cli-progress');
    const { withExclusions } = await import('../core/contrast/exclusions.ts');
    const { designTitle, signText } = await import('../core/contrast/labels.ts');
    const { compareDatabase } = await import('../analysis/compare-runner.ts');
    const { dataIdentityOf, tryAppendLedger } = await import('../analysis/ledger.ts');
    const { reportUserError } = await import('./user-errors.ts');
    const { partLine } = await import('../core/confirmation/methods-text.ts');
    const ledger = flags.ledger === false ? null : (flags.ledger ?? `${database}.ledger.jsonl`);
    let exclusions;
    try {
      refuseClashes(
        [
          { what: 'the database', file: database },
          flags.contrast ? { what: '--contrast', file: flags.contrast } : null,
          flags.exclusions ? { what: '--exclusions', file: flags.exclusions } : null,
        ],
        [
          ledger ? { what: 'the ledger', file: ledger } : null,
          { what: '--out', file: flags.out },
          flags.tsv ? { what: '--tsv', file: flags.tsv } : null,
          flags.pointsTsv ? { what: '--points-tsv', file: flags.pointsTsv } : null,
        ],
      );
      exclusions = readExclusions(flags.exclusions);
    } catch (e) {
      if (reportUserError('compare', e)) return;
      throw e;
    }
    const given = contrastOrExit(flags);
    if (!given) return;
    // a TSV's exclusions join those the contrast carries, so the result's contrast reruns as it ran
    const contrast = exclusions.length ? withExclusions(given, exclusions) : given;
    const bar =
      !flags.quiet && process.stderr.isTTY
        ? new cliProgress.SingleBar(
            { format: 'permutations {bar} {value}/{total} | ETA {eta_formatted}', stream: process.stderr },
            cliProgress.Presets.shades_classic,
          )
        : null;
    let started = false;
    let result: CompareRun;
    try {
      result = await compareDatabase(
        database,
        contrast,
        [],
        (done, total) => {
          if (!bar) return;
          if (!started) {
            bar.start(total, 0);
            started = true;
          }
          bar.update(done);
        },
        flags.run,
        { threads: flags.threads },
      );
    } catch (e) {
      bar?.stop();
      if (reportUserError('compare', e)) return;
      throw e;
    }
    bar?.stop();
    try {
      writeFileReplacing(flags.out, JSON.stringify(result, null, 2) + '\n');
      if (flags.tsv) writeFileReplacing(flags.tsv, clustersTsv(result, flags.singlePointClusters ?? false));
      if (flags.pointsTsv) writeFileReplacing(flags.pointsTsv, pointsTsv(result));
    } catch (e) {
      if (reportUserError('compare', e)) return;
      throw e;
    }
    const ledgerWarning = ledger ? tryAppendLedger(ledger, database, { ...result, data: await dataIdentityOf(database, result.database.runId) }) : null;
    const n = Object.entries(result.n)
      .map(([k, v]) => `${k} ${v}`)
      .join(', ');
    const best = result.clusters[0];
    console.log(
      `${result.measure}; ${designTitle(result.contrast)}; n: ${n}; excluded: ${result.exclusions.length}; clusters: ${result.clusters.length}` +
        (best
          ? `; best p = ${best.p.toPrecision(3)} (${signText(result.contrast, best.sign)}, ${best.fminHz}–${best.fmaxHz} Hz, ${best.channels.join(',')})`
          : ''),
    );
    for (const note of result.notes) console.log(note);
    if (!result.database.runFinished)
      console.log(`note: run ${result.database.runId} is unfinished (its ingest stopped before its end): the cohort may be partial`);
    const part = partLine(result);
    if (part) console.log(part);
    console.log(`wrote ${flags.out}`);
    if (ledgerWarning) console.error(`bandwise compare: ${ledgerWarning}`);
  });
}
