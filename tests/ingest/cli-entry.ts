// Test entry for the ingest command alone (the lead wires register() into src/cli/main.ts).
import { Command } from 'commander';
import { register } from '../../src/cli/ingest.ts';

const program = new Command().name('bandwise');
register(program);
await program.parseAsync(process.argv);
