// Test entry with the commands of the scale tests (the lead wires register() into ingest/cli/main.ts).
import { Command } from 'commander';
import { register as ingest } from '../../ingest/cli/ingest.ts';
import { register as merge } from '../../ingest/cli/merge.ts';
import { register as clusterScript } from '../../ingest/cli/cluster-script.ts';

const program = new Command().name('bandwise');
ingest(program);
merge(program);
clusterScript(program);
await program.parseAsync(process.argv);
