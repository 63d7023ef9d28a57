/** `bandwise simulate <scenario.json> <out-folder>`: writes a simulated cohort with its ground truth. */
import type { Command } from 'commander';
import path from 'node:path';
import { EXIT_OUTPUT_REFUSED, refuseClashes } from '../files/output-files.ts';

const HELP = `
Generates synthetic sleep EEG with a known ground truth, one night per subject, from a scenario
file (JSON; demo-cohort/scenario.json is a complete example). Written into <out-folder>:
  <subject>.edf            EDF+C, every channel in uV against the scenario's reference electrode
                           (labels "EEG C3-REF"), 16-bit (0.1 uV steps, range +-3276.8 uV),
                           1-s records, the stages as "Sleep stage W|N1|N2|N3|R" annotations
  <subject>_scoring.tsv    the same stages as onset / duration / stage rows (30-s epochs)
  participants.tsv         the cohort table (subject, group, recording, scoring, age, sex, score),
                           ready for 'bandwise ingest'
  truth.json               everything planted: per subject, stage and channel the aperiodic offset
                           (log10 uV^2/Hz), exponent and knee, the rhythm peaks, the group effects
                           and the artifacts (mains hum, flat channel, movement epochs)
The same scenario and seed always give the same files. The data are invented; no real person's
recording is involved.`;

export function register(program: Command): void {
  program
    .command('simulate')
    .description('write a simulated cohort (EDF+, scoring, participants table, ground truth) from a scenario file')
    .argument('<scenario.json>', 'scenario file (JSON)')
    .argument('<out-folder>', 'folder for the generated files (created if missing)')
    .addHelpText('after', HELP)
    .action(async (scenarioPath: string, outDir: string) => {
      // loaded on use: `bandwise --help` reads none of the simulation code
      const { default: cliProgress } = await import('cli-progress');
      const { ScenarioFileError, writeSimulatedCohort } = await import('../simulation/index.ts');
      const bar = process.stderr.isTTY
        ? new cliProgress.SingleBar(
            { format: 'simulating {subject} |{bar}| {value}/{total} epochs · subject {n}/{of} · ETA {eta_formatted}', stream: process.stderr },
            cliProgress.Presets.shades_classic,
          )
        : null;
      let current = '';
      try {
        refuseClashes(
          [{ what: 'the scenario', file: scenarioPath }],
          ['participants.tsv', 'truth.json'].map((f) => ({ what: 'the output', file: path.join(outDir, f) })),
        );
      } catch (e) {
        console.error(`bandwise simulate: ${(e as Error).message}`);
        process.exitCode = EXIT_OUTPUT_REFUSED;
        return;
      }
      try {
        const files = await writeSimulatedCohort(scenarioPath, outDir, {
          onProgress: (p) => {
            if (!bar) return;
            if (p.subject !== current) {
              if (current) bar.stop();
              current = p.subject;
              bar.start(p.epochsTotal, 0, { subject: p.subject, n: p.subjectsDone + 1, of: p.subjectsTotal });
            } else bar.update(p.epochsDone);
          },
        });
        bar?.stop();
        console.log(`wrote ${files.recordings.length} recordings to ${path.resolve(outDir)}`);
        console.log(`cohort table: ${files.participantsPath}`);
        console.log(`ground truth: ${files.truthPath}`);
      } catch (e) {
        bar?.stop();
        if (e instanceof ScenarioFileError) {
          console.error(e.message);
          process.exitCode = 2;
          return;
        }
        throw e;
      }
    });
}
