/**
 * `bandwise merge <shard.duckdb…> --out cohort.duckdb`: combine the shard databases of one
 * sharded ingest into one cohort database (same format as a single-process ingest), then run
 * the cohort-level quality pass. Exit status 0 merged, 1 refused or failed (nothing written),
 * 2 --out is one of the shards (nothing written).
 */
import { Command } from 'commander';
import { EXIT_OUTPUT_REFUSED, refuseClashes } from '../files/output-files.ts';

interface Flags {
  out: string;
  allowMissingShards?: boolean;
}

export function register(program: Command): void {
  program
    .command('merge')
    .description(
      'Combine shard databases written by `bandwise ingest --shard K/N` with the same parameters into one new ' +
        'cohort database, then run the cohort-level quality pass (distance of each spectrum from the cohort median). ' +
        'Refuses shards written with different parameters or tool versions, unfinished shards, and a recording ' +
        'stored differently in two shards; a recording stored identically in two shards is kept once.',
    )
    .argument('<shards...>', 'shard database files (.duckdb)')
    .requiredOption('--out <file>', 'merged database file to create (must not exist)')
    .option('--allow-missing-shards', 'merge even if some shards K/N are not among the inputs (default: refused)')
    .addHelpText('after', '\nExample:\n  bandwise merge shards/shard-*.duckdb --out cohort.duckdb\n\nA research tool, not a diagnostic device.')
    .action(async (shards: string[], flags: Flags) => {
      const { mergeShards } = await import('../../ingest/store/merge.ts'); // loaded on use
      const t0 = Date.now();
      try {
        refuseClashes(
          shards.map((file) => ({ what: 'the shard', file })),
          [{ what: '--out', file: flags.out }],
        );
      } catch (e) {
        console.error(`bandwise merge: ${(e as Error).message}`);
        process.exitCode = EXIT_OUTPUT_REFUSED;
        return;
      }
      try {
        const s = await mergeShards(shards, flags.out, { allowMissingShards: flags.allowMissingShards });
        console.log(
          `merged ${s.shards} shard(s) into ${s.out}: ${s.recordings} recordings, run(s) ${s.runIds.join(', ')}` +
            `${s.duplicatesDropped ? `, ${s.duplicatesDropped} identical duplicate(s) kept once` : ''}` +
            `${s.missingShards.length ? `, shards missing: ${s.missingShards.join(', ')}` : ''}; ` +
            `${s.cohortQualityRows} cohort-quality rows; ${((Date.now() - t0) / 1000).toFixed(1)} s`,
        );
        process.exitCode = 0;
      } catch (e) {
        console.error(`bandwise merge: ${(e as Error).message}`);
        process.exitCode = 1;
      }
    });
}
