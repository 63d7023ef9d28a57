/** `bandwise dashboard <cohort.duckdb> [--port P]`: the dashboard on 127.0.0.1 for one database. */
import { Command, InvalidArgumentError } from 'commander';

export function register(program: Command): void {
  program
    .command('dashboard')
    .description(
      'Serves the dashboard and the database on 127.0.0.1 (never on other addresses) and prints the address to open ' +
        'in a browser. The browser reads the database with HTTP range requests; nothing is fetched from the ' +
        "internet. The analyses run in the browser are recorded in the database's ledger (<database>.ledger.jsonl, the one the " +
        'commands write), so the count of distinct analyses is one for both. The only writes to the database are the workflow ' +
        'steps the "Split and plans" view offers (split, lock, confirm), done as the commands of those names do them and recorded ' +
        'in the same ledger; --read-only turns them off. Stop with Ctrl-C. A research tool, not a diagnostic device.',
    )
    .argument('<database>', 'bandwise database file (.duckdb)')
    .option('--port <port>', 'port on 127.0.0.1 (default: a free port)', (v) => {
      const p = Number(v);
      if (!Number.isInteger(p) || p < 1 || p > 65535) throw new InvalidArgumentError(`invalid port: ${v}`);
      return p;
    })
    .option('--read-only', 'never write to the database: the split, lock and confirm steps run from the command line only')
    .action(async (database: string, flags: { port?: number; readOnly?: boolean }) => {
      // loaded on use: `bandwise --help` opens no database code
      const { dashboardAppDir, serveDashboard, waitForSignal } = await import('../server/launcher.ts');
      const { checkpointLeftoverLog, openStore } = await import('../../ingest/store/database.ts');
      const { chooseRun, runs } = await import('../queries/runs.ts');
      const { storeClient } = await import('../analysis/store-client.ts');
      const { reportUserError } = await import('./user-errors.ts');
      try {
        dashboardAppDir(); // the app is built (`npm run build`), never compiled here
        // the browser reads the file as it is on disk: refuse one another process is writing (its lock says so)
        const store = await openStore(database, { readOnly: true });
        try {
          // the views read the most recent finished run: refuse a database with none
          chooseRun(await runs(storeClient(store)));
        } finally {
          await store.close();
        }
        if (await checkpointLeftoverLog(database))
          console.log(`the write-ahead log ${database}.wal (left by a writer that was stopped) was folded into the file`);
      } catch (e) {
        if (reportUserError('dashboard', e)) return;
        throw e;
      }
      const server = await serveDashboard(database, flags.port, { readOnly: flags.readOnly });
      console.log(`dashboard on ${server.url}  (Ctrl-C to stop)`);
      await waitForSignal();
      await server.close();
    });
}
