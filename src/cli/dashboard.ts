/** `bandwise dashboard <cohort.duckdb> [--port P]`: the dashboard on 127.0.0.1 for one database. */
import { Command, InvalidArgumentError } from 'commander';
import { serveDashboard, waitForSignal } from '../server/launcher.ts';
import { checkpointLeftoverLog, openStore } from '../../ingest/store/database.ts';
import { chooseRun } from '../analysis/compare-runner.ts';
import { reportUserError } from './user-errors.ts';

export function register(program: Command): void {
  program
    .command('dashboard')
    .summary('open the dashboard on a database (served on 127.0.0.1 only)')
    .description(
      'Serves the dashboard and the database on 127.0.0.1 (never on other addresses) and prints the address to open ' +
        'in a browser. The browser reads the database read-only with HTTP range requests; nothing is fetched from the ' +
        'internet. Stop with Ctrl-C. A research tool, not a diagnostic device.',
    )
    .argument('<database>', 'bandwise database file (.duckdb)')
    .option('--port <port>', 'port on 127.0.0.1 (default: a free port)', (v) => {
      const p = Number(v);
      if (!Number.isInteger(p) || p < 1 || p > 65535) throw new InvalidArgumentError(`invalid port: ${v}`);
      return p;
    })
    .option('--rebuild', 'rebuild the dashboard app before serving')
    .action(async (database: string, flags: { port?: number; rebuild?: boolean }) => {
      try {
        // the browser reads the file as it is on disk: refuse one another process is writing (its lock says so)
        const store = await openStore(database, { readOnly: true });
        try {
          // the views read the most recent finished run: refuse a database with none
          await chooseRun(store, undefined, database);
        } finally {
          await store.close();
        }
        if (await checkpointLeftoverLog(database)) console.log(`the write-ahead log ${database}.wal (left by a writer that was stopped) was folded into the file`);
      } catch (e) {
        if (reportUserError('dashboard', e)) return;
        throw e;
      }
      const server = await serveDashboard(database, flags.port, flags.rebuild);
      console.log(`dashboard on ${server.url}  (Ctrl-C to stop)`);
      await waitForSignal();
      await server.close();
    });
}
