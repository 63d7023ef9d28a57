// Test entry with the commands of the scale tests (the lead wires register() into src/cli/main.ts).
import { Command } from 'commander';
import { register as ingest } from '../../src/cli/ingest.ts';
import { register as merge } from '../../src/cli/merge.ts';
import { register as clusterScript } from '../../src/cli/cluster-script.ts';

const program = new Command().name('bandwise');
ingest(program);
merge(program);
clusterScript(program);
await program.parseAsync(process.argv);
