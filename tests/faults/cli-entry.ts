// Test entry with the commands the fault tests run (the same register() functions src/cli/main.ts wires; fewer modules to load per child).
import { Command } from 'commander';
import { register as ingest } from '../../src/cli/ingest.ts';
import { register as compare } from '../../src/cli/compare.ts';
import { register as bandCheck } from '../../src/cli/band-check.ts';
import { register as report } from '../../src/cli/report.ts';
import { register as dashboard } from '../../src/cli/dashboard.ts';
import { register as merge } from '../../src/cli/merge.ts';
import { register as clusterScript } from '../../src/cli/cluster-script.ts';
import { register as simulate } from '../../src/cli/simulate.ts';
import { dropOutputWhenReaderCloses } from '../../src/cli/closed-output.ts';

const program = new Command().name('bandwise');
ingest(program);
compare(program);
bandCheck(program);
report(program);
dashboard(program);
merge(program);
clusterScript(program);
simulate(program);
dropOutputWhenReaderCloses();
await program.parseAsync(process.argv);
