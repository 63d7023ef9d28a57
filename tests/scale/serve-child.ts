// Runs the dashboard server in its own process (so the load test can read the server's own RSS):
// argv db-file app-folder; prints {"url", "pid"} as one JSON line; exits on SIGTERM.
import { startDashboardServer } from '../../src/server/serve.ts';

const [dbPath, appDir] = process.argv.slice(2);
let served = 0;
const server = await startDashboardServer({ dbPath, appDir, onRequest: () => void served++ });
process.stdout.write(JSON.stringify({ url: server.url, pid: process.pid }) + '\n');
process.on('SIGTERM', () => {
  void server.close().then(() => process.exit(0));
});
process.on('SIGUSR2', () => process.stdout.write(JSON.stringify({ served }) + '\n'));
