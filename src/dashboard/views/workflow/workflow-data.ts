// What the "Split and plans" view shows: the plans as table rows, and each step of the workflow
// with the command that does it (the dashboard reads the database read-only; the steps that
// write — split, lock, confirm — run from the command line).
import type { Contrast } from '../../../core/contrast/spec.ts';
import type { Row } from '../../../queries/client.ts';
import type { WorkflowState } from '../../../queries/workflow.ts';

/** A contrast in a few words: what is compared, where, on which measure. */
export function contrastSummary(c: Contrast): string {
  const what =
    c.design === 'groups'
      ? `${c.groups![1]} − ${c.groups![0]} (${c.groupColumn})`
      : c.design === 'paired'
        ? `${(c.stages ?? c.sessions ?? []).join(' vs ')} paired`
        : `correlation with ${c.covariate}`;
  const channels = c.channels === 'all' ? 'all channels' : c.channels.join(' ');
  const bands = c.bands?.length ? `, ${c.bands.map((b) => `${b.name} ${b.loHz}–${b.hiHz} Hz`).join(', ')}` : '';
  return `${what}, ${c.stage}, ${c.measure}${bands}, ${c.fminHz}–${c.fmaxHz} Hz, ${channels}${c.channelAverage ? ' averaged' : ''}, ${c.correction}`;
}

/** One row per locked plan, newest last. */
export function planRows(w: WorkflowState): Row[] {
  return w.plans.map((p) => ({
    plan: p.id,
    locked_at: p.lockedAt,
    sha256: p.hash,
    split: p.splitId === w.split?.id ? `${p.splitId} (current)` : `${p.splitId} (replaced)`,
    contrasts: p.contrasts.map(contrastSummary).join('; '),
    exclusions: p.exclusions,
    confirmations: p.confirmations.length,
    confirmed_at: p.confirmations.map((c) => c.time).join(', ') || null,
  }));
}

export interface WorkflowStep {
  title: string;
  /** what the step does and what it needs */
  text: string;
  /** the command that does it (null: done in the dashboard itself) */
  command: string | null;
  done: boolean;
}

/** The steps with their commands for the database file `db`; `seed` fills in the split's seed. */
export function workflowSteps(w: WorkflowState, db: string, seed: number): WorkflowStep[] {
  const current = w.plans.filter((p) => p.splitId === w.split?.id);
  const open = current.find((p) => p.confirmations.length === 0) ?? current.at(-1);
  const planId = open?.id ?? '<plan id>';
  return [
    {
      title: '1. Split the subjects',
      text: w.split
        ? 'A second split is refused unless replaced knowingly (--replace); the command then lists what ran on the old one.'
        : 'Draws the exploration and confirmation parts from a seed, stratified by group; --blind codes the groups while exploring.',
      command: w.split ? null : `bandwise split ${db} --fraction 0.5 --seed ${seed} --blind`,
      done: w.split !== null,
    },
    {
      title: '2. Explore',
      text: 'Quality screen (every subject, no groups), spectra, contrasts, band checks and robustness paths — the analyses read the exploration part only. Save the contrast you settle on (Contrast view: Save contrast JSON) and the exclusions (Quality screen: export).',
      command: null,
      done: current.length > 0,
    },
    {
      title: '3. Lock the plan',
      text: 'Fixes the contrasts, the ingest run, the exclusions and the split under a SHA-256 hash, before the confirmation part is analysed.',
      command: `bandwise lock ${db} --contrast contrast.json --exclusions exclusions.tsv`,
      done: current.length > 0,
    },
    {
      title: '4. Confirm once',
      text: 'Runs the locked contrasts on the held-out part, unblinded. Only the first confirmation of a plan is a held-out test; later ones are marked as repeats.',
      command: `bandwise confirm ${db} --plan ${planId} --out confirmation.json`,
      done: current.some((p) => p.confirmations.length > 0),
    },
    {
      title: '5. Report',
      text: 'The methods text names the plan, its hash and lock time, and says whether the confirmation was the first and whether the confirmation part had been looked at before the lock. The Methods report view shows it too: load confirmation.json there.',
      command: 'bandwise report confirmation.json --out methods.md',
      done: false,
    },
  ];
}
