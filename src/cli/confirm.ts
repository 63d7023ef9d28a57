/**
 * `bandwise confirm <cohort.duckdb> --plan <id> --out result.json`
 * Runs a locked plan's contrasts on the confirmation part of its split, unblinded, and writes the
 * compare result of each with the plan (id, hash, lock time, which confirmation of the plan this is).
 */
import { writeFileSync } from 'node:fs';
import { Command, InvalidArgumentError } from 'commander';
import cliProgress from 'cli-progress';
import { looksText } from '../core/confirmation/methods-text.ts';
import { lookedBeforeLock } from '../core/confirmation/history.ts';
import { confirmPlan } from '../analysis/confirm-plan.ts';
import type { CompareRun } from '../analysis/compare-runner.ts';
import { reportWorkflowError } from './workflow-errors.ts';

interface ConfirmFlags {
  plan: string;
  out: string;
  ledger?: string;
  threads?: number;
  quiet?: boolean;
}

/** Result files: the one given for a one-contrast plan, else <name>-<k>.json for contrast k. */
export function resultFiles(out: string, count: number): string[] {
  if (count === 1) return [out];
  const base = out.replace(/\.json$/i, '');
  return Array.from({ length: count }, (_, k) => `${base}-${k + 1}.json`);
}

function summary(r: CompareRun): string {
  const p = r.plan!;
  const n = Object.entries(r.n)
    .map(([k, v]) => `${k} ${v}`)
    .join(', ');
  const best = r.clusters[0];
  const verdict = best
    ? `best p = ${best.p.toPrecision(3)} (${best.sign > 0 ? '+' : '−'}, ${best.fminHz}–${best.fmaxHz} Hz, ${best.channels.join(',')}), ${best.p < p.alpha ? 'confirmed' : 'not confirmed'} at α = ${Number(p.alpha.toPrecision(3))}`
    : 'no cluster formed: not confirmed';
  return `contrast ${p.contrastIndex} of ${p.contrasts}: ${r.measure}; n: ${n}; clusters: ${r.clusters.length}; ${verdict}`;
}

export function register(program: Command): void {
  program
    .command('confirm')
    .description(
      "Runs the contrasts of a locked plan (`bandwise lock`) on the confirmation part of its split with the plan's run and " +
        'exclusions; groups named by their codes are unblinded. Writes the compare result JSON of each contrast with "part" ' +
        '(confirmation) and "plan" (id, hash, lockedAt, confirmationRun, …): for a plan of several contrasts, <out>-1.json, ' +
        '<out>-2.json, …, each confirmed at α = 0.05 / contrasts (Bonferroni). Records the confirmation in the database ' +
        '(table plan_confirmations) and the ledger: only the first confirmation of a plan is a held-out test, and the result ' +
        'and `bandwise report` say when it is not, or when the ledger shows confirmation-part data analysed before the lock. ' +
        'A research tool: results are not a diagnosis.',
    )
    .argument('<database>', 'bandwise database file (.duckdb) with a split and a locked plan')
    .requiredOption('--plan <id>', 'the plan id `bandwise lock` printed')
    .requiredOption('--out <file>', 'result JSON to write')
    .option('--ledger <file>', 'ledger file the confirmation is recorded in (default: <database>.ledger.jsonl)')
    .option('--threads <n>', 'threads for the permutations (default: one per core for a large contrast, else 1); the result is the same', (v) => {
      const x = Number(v);
      if (!(Number.isInteger(x) && x >= 1)) throw new InvalidArgumentError(`invalid --threads: ${v} (a whole number ≥ 1)`);
      return x;
    })
    .option('--quiet', 'no progress bar')
    .addHelpText(
      'after',
      '\nExample:\n  bandwise confirm cohort.duckdb --plan 3f9a2c1e07b4 --out confirmation.json\n  bandwise report confirmation.json --out methods.md\n\nA research tool, not a diagnostic device.',
    )
    .action(async (database: string, flags: ConfirmFlags) => {
      const bar =
        !flags.quiet && process.stderr.isTTY
          ? new cliProgress.SingleBar({ format: 'permutations {bar} {value}/{total}', stream: process.stderr }, cliProgress.Presets.shades_classic)
          : null;
      let results: CompareRun[];
      try {
        results = await confirmPlan(database, flags.plan, {
          ledger: flags.ledger ?? `${database}.ledger.jsonl`,
          threads: flags.threads,
          onProgress: () => {
            let started = false;
            return (done, total) => {
              if (!bar) return;
              if (!started) bar.start(total, 0);
              started = true;
              bar.update(done);
            };
          },
        });
      } catch (e) {
        bar?.stop();
        if (reportWorkflowError('confirm', e)) return;
        throw e;
      }
      bar?.stop();
      const files = resultFiles(flags.out, results.length);
      results.forEach((r, k) => writeFileSync(files[k], JSON.stringify(r, null, 2) + '\n'));
      const p = results[0].plan!;
      console.log(
        `plan ${p.id} (SHA-256 ${p.hash}, locked ${p.lockedAt}): confirmation ${p.confirmationRun} on ${results[0].split!.subjects.confirmation} held-out subjects`,
      );
      for (const r of results) console.log(summary(r));
      if (p.confirmationRun > 1)
        console.log(`warning: not the first confirmation of this plan (earlier: ${p.earlierConfirmations.join(', ')}); only the first is a held-out test`);
      if (lookedBeforeLock(p.analysedBeforeLock)) console.log(`warning: ${looksText(p.analysedBeforeLock)}`);
      console.log(`wrote ${files.join(', ')}`);
    });
}
