/**
 * The bandwise command line. Each subcommand lives in its own file under src/cli/ and adds
 * itself to the program through register(program).
 */
import { Command } from 'commander';
import { readFileSync } from 'node:fs';
import { register as registerIngest } from './ingest.ts';
import { register as registerMerge } from './merge.ts';
import { register as registerCompare } from './compare.ts';
import { register as registerSimulate } from './simulate.ts';
import { register as registerDashboard } from './dashboard.ts';
import { register as registerDemo } from './demo.ts';
import { register as registerBandCheck } from './band-check.ts';
import { register as registerReport } from './report.ts';
import { register as registerClusterScript } from './cluster-script.ts';
import { dropOutputWhenReaderCloses } from './closed-output.ts';

const pkg = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string };

const program = new Command();
program
  .name('bandwise')
  .description(
    'Cohort-level sleep-EEG spectral database and group comparisons.\n' +
      'A research tool, not a diagnostic device.',
  )
  .version(pkg.version)
  .showHelpAfterError();

registerIngest(program);
registerMerge(program);
registerCompare(program);
registerBandCheck(program);
registerReport(program);
registerDashboard(program);
registerClusterScript(program);
registerSimulate(program);
registerDemo(program);

dropOutputWhenReaderCloses();
await program.parseAsync(process.argv);
