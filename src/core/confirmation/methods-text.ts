/**
 * The methods report's paragraph on the split and the plan: which part of the subjects a result
 * used, whether the groups were blinded, and for a confirmation the locked plan (id, hash, lock
 * time), that its contrasts were fixed before the confirmation part was analysed, and — said
 * plainly — when the confirmation is not the plan's first or when confirmation-part data had
 * been analysed before the lock.
 */
import type { CompareCluster } from '../contrast/run.ts';
import type { Contrast } from '../contrast/spec.ts';
import type { LooksBeforeLock, PartFields } from './stamp.ts';

const g3 = (x: number) => Number(x.toPrecision(3)).toString();
const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/** The looks at the confirmation part before a lock, in words. */
export function looksText(l: LooksBeforeLock): string {
  const parts = [
    l.wholeCohort > 0 ? `${l.wholeCohort} on the whole cohort before the split` : '',
    l.earlierSplits > 0 ? `${l.earlierSplits} on an earlier split that shares subjects with this confirmation part` : '',
    l.confirmations > 0 ? `${plural(l.confirmations, 'confirmation', 'confirmations')} on this confirmation part` : '',
  ].filter(Boolean);
  const n = l.wholeCohort + l.earlierSplits + l.confirmations;
  return `the ledger shows ${plural(n, 'analysis', 'analyses')} that included confirmation-part subjects before the plan was locked (${parts.join('; ')})`;
}

function splitText(r: Required<Pick<PartFields, 'part' | 'split'>>): string {
  const s = r.split;
  const total = s.subjects.exploration + s.subjects.confirmation;
  const strata = s.stratify.length > 0 ? `, stratified by ${s.stratify.map((c) => `"${c}"`).join(', ')}` : '';
  return `split ${s.id} of the subjects (made ${s.madeAt}; seed ${s.seed}; ${g3(s.fraction * 100)} % of each stratum for exploration${strata}): ${s.subjects[r.part]} of ${total} subjects`;
}

function unblindingText(locked: Contrast, ran: Contrast): string {
  if (locked.design !== 'groups' || !locked.groups || !ran.groups || locked.groups.every((g, i) => g === ran.groups![i])) return '';
  return ` The plan named the groups by their codes, as they were shown while exploring; they were unblinded for this analysis: ${locked.groups[0]} is ${ran.groups[0]} and ${locked.groups[1]} is ${ran.groups[1]}.`;
}

/** The paragraph for a result made while a split exists (null without a split). */
export function partParagraph(r: PartFields & { contrast: Contrast; clusters?: CompareCluster[] }): string | null {
  if (!r.part || !r.split) return null;
  const part = { part: r.part, split: r.split };
  if (r.part === 'exploration' || !r.plan) {
    let s = `This analysis used the ${r.part} part of ${splitText(part)}; the other ${r.split.subjects[r.part === 'exploration' ? 'confirmation' : 'exploration']} were not analysed. `;
    s +=
      r.part === 'exploration'
        ? 'It is exploratory: trying analysis choices on this part is what it is for, and its p-values confirm nothing; a plan fixed from it is confirmed on the held-out part (bandwise lock, bandwise confirm).'
        : 'It was not run under a locked plan.';
    if (r.blinded)
      s += ` The groups of "${r.contrast.groupColumn}" were blinded: shown under codes assigned from the split's seed, with group sizes pooled over the groups, so the direction of a difference could not be tied to a group.`;
    return s;
  }
  const p = r.plan;
  let s =
    `This is the confirmatory analysis of plan ${p.id}, locked at ${p.lockedAt} (SHA-256 of the plan's canonical JSON: ${p.hash}). ` +
    `The plan fixed the contrasts, the ingest run, the exclusions (${p.exclusions}) and the split before this analysis of the confirmation part; ` +
    `the contrast was run as locked on the confirmation part of ${splitText(part)}, none of them in the exploration part.` +
    unblindingText(p.lockedContrast, r.contrast);
  const best = r.clusters && r.clusters.length > 0 ? Math.min(...r.clusters.map((k) => k.p)) : null;
  s +=
    p.contrasts > 1
      ? ` The plan holds ${p.contrasts} contrasts (this is contrast ${p.contrastIndex}); each is judged at α = 0.05/${p.contrasts} = ${g3(p.alpha)} (Bonferroni).`
      : ` It is judged at α = ${g3(p.alpha)}.`;
  s += best === null ? ' No cluster formed: not confirmed.' : ` Smallest cluster p = ${g3(best)}: ${best < p.alpha ? 'confirmed' : 'not confirmed'}.`;
  if (p.confirmationRun > 1) {
    s += `\n\n**This is not the first confirmation of this plan** but confirmation ${p.confirmationRun} (earlier: ${p.earlierConfirmations.join(', ')}). Only the first confirmation is a test held out from every choice; a repeat is another look at the same subjects and is not a new confirmation.`;
  }
  const l = p.analysedBeforeLock;
  const looked = l.wholeCohort + l.earlierSplits + l.confirmations > 0;
  s += looked
    ? `\n\n**The plan was locked after data of the confirmation part had been analysed:** ${looksText(l)}. Its contrasts may have been chosen knowing those data, so this result is not a held-out confirmation.`
    : '\n\nThe ledger of this database records no analysis that included confirmation-part subjects before the plan was locked.';
  s +=
    ' (The ledger lists what the command line ran with a ledger; the dashboard keeps its own list in the browser and, while a split exists, reads the exploration part only.)';
  return s;
}

/** One line on the part of the split a result used (null without a split): the command line prints it, the views show it. */
export function partLine(r: PartFields): string | null {
  if (!r.part || !r.split) return null;
  const s = r.split;
  const total = s.subjects.exploration + s.subjects.confirmation;
  return `${r.part} part of split ${s.id} (${s.subjects[r.part]} of ${total} subjects)${r.blinded ? '; groups blinded, group sizes pooled' : ''}`;
}
