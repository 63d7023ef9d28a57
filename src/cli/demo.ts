/**
 * `bandwise demo`: the whole job on the invented demo cohort — generate the recordings (first
 * run only), ingest them, run the demo's contrasts headless, then open the dashboard.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { Command } from 'commander';
import type cliProgressModule from 'cli-progress';
import type { ContrastJson } from '../core/contrast/spec.ts';
import { RESEARCH_NOTE } from '../core/contrast/run.ts';

/** The demo's contrasts: patients minus controls in N2, on log10 PSD and on the residual spectrum. */
export const DEMO_CONTRASTS: { name: string; what: string; contrast: ContrastJson }[] = [
  {
    name: 'n2-log-psd',
    what: 'N2 log10 PSD, all channels, 1–30 Hz (the broadband offset shows everywhere)',
    contrast: { design: 'groups', groups: ['control', 'patient'], stage: 'N2', measure: 'log-psd', fminHz: 1, fmaxHz: 30 },
  },
  {
    name: 'n2-residual',
    what: 'N2 residual spectrum (log10 PSD minus the aperiodic fit), all channels, 1–30 Hz (the fast-spindle reduction)',
    contrast: { design: 'groups', groups: ['control', 'patient'], stage: 'N2', measure: 'residual', fminHz: 1, fmaxHz: 30 },
  },
];

function bar(cliProgress: typeof cliProgressModule, label: string, quiet: boolean) {
  return quiet
    ? null
    : new cliProgress.SingleBar({ format: `${label.padEnd(12)} |{bar}| {value}/{total}`, hideCursor: true }, cliProgress.Presets.shades_classic);
}

/** The demo's band checks: is N2 theta (planted: broadband offset) or sigma (planted: fewer fast spindles) band-specific? */
export const DEMO_BAND_CHECKS: { name: string; what: string; band: { name: string; loHz: number; hiHz: number }; contrast: ContrastJson }[] = [
  {
    name: 'n2-theta-band-check',
    what: 'band check, N2 theta 4–8 Hz, all channels averaged',
    band: { name: 'theta', loHz: 4, hiHz: 8 },
    contrast: { design: 'groups', groups: ['control', 'patient'], stage: 'N2' },
  },
  {
    name: 'n2-sigma-band-check',
    what: 'band check, N2 sigma 12–16 Hz, C3 C4 Cz P3 P4 Pz averaged',
    band: { name: 'sigma', loHz: 12, hiHz: 16 },
    contrast: { design: 'groups', groups: ['control', 'patient'], stage: 'N2', channels: ['C3', 'C4', 'Cz', 'P3', 'P4', 'Pz'] },
  },
];

export function register(program: Command): void {
  program
    .command('demo')
    .description(
      'Generates the invented demo cohort on first use (demo-cohort/recordings/), ingests it into ' +
        'demo-cohort/demo.duckdb (resumable), runs the demo contrasts headless (results in demo-cohort/results/), ' +
        'then serves the dashboard on 127.0.0.1. The data are synthetic; see demo-cohort/scenario.json for what was planted. ' +
        RESEARCH_NOTE,
    )
    .option('--no-dashboard', 'stop after writing the results (demo-cohort/results/), without starting the dashboard')
    .option('--port <port>', 'dashboard port on 127.0.0.1 (default: a free port)', Number)
    .option('--jobs <n>', 'ingest worker threads (default: one per core)', Number)
    .action(async (flags: { dashboard: boolean; port?: number; jobs?: number }) => {
      // loaded on use: `bandwise --help` reads none of this
      const { default: cliProgress } = await import('cli-progress');
      const { ensureDemoCohort, DEMO_DIR, DEMO_INGEST_PARAMS } = await import('../simulation/index.ts');
      const { runIngest } = await import('../../ingest/run.ts');
      const { compareDatabase } = await import('../analysis/compare-runner.ts');
      const { parseContrast } = await import('../core/contrast/spec.ts');
      const { AppNotBuiltError, dashboardAppDir, serveDashboard, waitForSignal } = await import('../server/launcher.ts');
      const { bandCheckDatabase } = await import('../analysis/band-check-runner.ts');
      const { writeReport } = await import('../analysis/write-report.ts');
      const { appendLedger, dataIdentityOf } = await import('../analysis/ledger.ts');
      if (flags.dashboard) {
        // say so before the long work, not after it
        try {
          dashboardAppDir();
        } catch (e) {
          if (!(e instanceof AppNotBuiltError)) throw e;
          console.error(`bandwise demo: ${e.message} (or run \`bandwise demo --no-dashboard\`)`);
          process.exitCode = 1;
          return;
        }
      }
      const DEMO_DATABASE = path.join(DEMO_DIR, 'demo.duckdb');
      const DEMO_RESULTS = path.join(DEMO_DIR, 'results');
      const quiet = !process.stdout.isTTY;
      const gen = bar(cliProgress, 'generate', quiet);
      let started = false;
      const cohort = await ensureDemoCohort({
        onProgress: (p) => {
          if (!gen) return;
          if (!started) gen.start(p.subjectsTotal, 0);
          started = true;
          gen.update(p.subjectsDone);
        },
      });
      gen?.stop();
      console.log(
        cohort.generated
          ? `generated ${cohort.recordings.length} recordings in demo-cohort/recordings/`
          : `demo recordings up to date (${cohort.recordings.length})`,
      );

      const ing = bar(cliProgress, 'ingest', quiet);
      const summary = await runIngest(
        cohort.participantsPath,
        DEMO_DATABASE,
        { jobs: flags.jobs, params: { references: [...DEMO_INGEST_PARAMS.references] } },
        (e) => {
          if (!ing) return;
          if (e.kind === 'start') ing.start(e.total, 0);
          else if (e.kind === 'recording') ing.increment();
        },
      );
      ing?.stop();
      console.log(
        `ingest: ${summary.done} done, ${summary.skipped} already stored, ${summary.failed.length} failed → ${path.relative(process.cwd(), DEMO_DATABASE)}`,
      );
      for (const f of summary.failed) console.log(`  failed ${f.file} at ${f.step}: ${f.message}`);

      mkdirSync(DEMO_RESULTS, { recursive: true });
      for (const d of DEMO_CONTRASTS) {
        const result = await compareDatabase(DEMO_DATABASE, parseContrast(d.contrast), []);
        const file = path.join(DEMO_RESULTS, `${d.name}.json`);
        writeFileSync(file, JSON.stringify(result, null, 2) + '\n');
        appendLedger(`${DEMO_DATABASE}.ledger.jsonl`, DEMO_DATABASE, { ...result, data: await dataIdentityOf(DEMO_DATABASE, result.database.runId) });
        console.log(
          `\n${d.what}\n  n: ${Object.entries(result.n)
            .map(([k, v]) => `${k} ${v}`)
            .join(', ')}; written to ${path.relative(process.cwd(), file)}`,
        );
        for (const k of result.clusters.slice(0, 3)) {
          console.log(
            `  cluster ${k.sign > 0 ? 'patient > control' : 'patient < control'}: ${k.fminHz}–${k.fmaxHz} Hz over ${k.channels.join(',')}, mass ${k.mass.toFixed(0)}, p = ${k.p.toPrecision(3)}`,
          );
        }
      }
      const ledger = `${DEMO_DATABASE}.ledger.jsonl`;
      for (const d of DEMO_BAND_CHECKS) {
        const result = await bandCheckDatabase(DEMO_DATABASE, parseContrast(d.contrast), d.band, []);
        const file = path.join(DEMO_RESULTS, `${d.name}.json`);
        writeFileSync(file, JSON.stringify(result, null, 2) + '\n');
        appendLedger(ledger, DEMO_DATABASE, {
          kind: result.kind,
          contrast: { ...result.contrast, band: result.band },
          p: result.p,
          data: await dataIdentityOf(DEMO_DATABASE, result.database.runId),
        });
        console.log(`\n${d.what}: ${result.verdict}\n  ${result.sentence}`);
      }
      const report = path.join(DEMO_RESULTS, 'n2-sigma-band-check-methods.md');
      await writeReport(path.join(DEMO_RESULTS, 'n2-sigma-band-check.json'), { out: report, database: DEMO_DATABASE, ledger });
      console.log(`\nmethods text for the sigma band check: ${path.relative(process.cwd(), report)}`);
      console.log(`\n${RESEARCH_NOTE}`);
      if (!flags.dashboard) return;
      const server = await serveDashboard(DEMO_DATABASE, flags.port);
      console.log(`\ndashboard on ${server.url}  (open it in a browser; Ctrl-C to stop)`);
      await waitForSignal();
      await server.close();
    });
}
