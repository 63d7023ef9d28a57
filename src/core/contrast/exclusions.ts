/**
 * The exclusion list as TSV (subject, channel, stage, reason; channel empty or "all" for the
 * whole subject, stage empty or "all" for every stage; the stage column is written only when an
 * exclusion names one). The dashboard exports and imports it; `bandwise compare --exclusions`
 * reads it. The contrast JSON carries the same list (spec.ts "exclusions").
 */
import type { Exclusion } from './data.ts';
import type { Contrast, ContrastExclusion } from './spec.ts';
import { SCORED_STAGES, type Stage } from '../stages.ts';

export function exclusionsToTsv(list: readonly Exclusion[]): string {
  const clean = (s: string) => s.replace(/[\t\r\n]+/g, ' ');
  const staged = list.some((e) => e.stage !== undefined);
  const row = (e: Exclusion) => [clean(e.subject), e.channel ? clean(e.channel) : 'all', ...(staged ? [e.stage ?? 'all'] : []), clean(e.reason)].join('\t');
  return [staged ? 'subject\tchannel\tstage\treason' : 'subject\tchannel\treason', ...list.map(row)].join('\n') + '\n';
}

export function parseExclusionsTsv(text: string, file = 'exclusions'): Exclusion[] {
  const lines = text.split(/\r?\n/).filter((l) => l.trim() !== '');
  if (lines.length === 0) return [];
  const header = lines[0].split('\t').map((h) => h.trim().toLowerCase());
  const col = (name: string) => header.indexOf(name);
  if (col('subject') < 0) throw new Error(`${file}: header needs a "subject" column (got: ${header.join(', ')})`);
  return lines.slice(1).map((line, i) => {
    const cells = line.split('\t');
    const subject = (cells[col('subject')] ?? '').trim();
    if (!subject) throw new Error(`${file}: row ${i + 1} has no subject`);
    const ch = col('channel') >= 0 ? (cells[col('channel')] ?? '').trim() : '';
    const st = col('stage') >= 0 ? (cells[col('stage')] ?? '').trim() : '';
    if (st !== '' && st.toLowerCase() !== 'all' && !(SCORED_STAGES as readonly string[]).includes(st))
      throw new Error(`${file}: row ${i + 1} has stage "${st}" (expected ${SCORED_STAGES.join(', ')} or all)`);
    const reason = col('reason') >= 0 ? (cells[col('reason')] ?? '').trim() : '';
    const stage = st === '' || st.toLowerCase() === 'all' ? {} : { stage: st as Exclude<Stage, 'unscored'> };
    return { subject, channel: ch === '' || ch.toLowerCase() === 'all' ? null : ch, ...stage, reason: reason || 'no reason given' };
  });
}

/** An exclusion as the contrast JSON writes it (channel and stage only when given). */
export function contrastExclusion(e: Exclusion): ContrastExclusion {
  return { subject: e.subject, ...(e.channel !== null ? { channel: e.channel } : {}), ...(e.stage ? { stage: e.stage } : {}), reason: e.reason };
}

/** The contrast with `more` exclusions added to those it carries (one entry per subject × channel × stage, the first reason kept). */
export function withExclusions(c: Contrast, more: readonly Exclusion[]): Contrast {
  const key = (e: ContrastExclusion) => `${e.subject}\u0000${e.channel ?? ''}\u0000${e.stage ?? ''}`;
  const seen = new Set(c.exclusions.map(key));
  const added: ContrastExclusion[] = [];
  for (const e of more.map(contrastExclusion)) {
    if (seen.has(key(e))) continue;
    seen.add(key(e));
    added.push(e);
  }
  return added.length === 0 ? c : { ...c, exclusions: [...c.exclusions, ...added] };
}

/** The list without repeats (the same subject, channel, stage and reason given by several parts of one analysis), first occurrence kept. */
export function uniqueExclusions(list: readonly Exclusion[]): Exclusion[] {
  const seen = new Set<string>();
  return list.filter((e) => {
    const k = `${e.subject}\u0000${e.channel ?? ''}\u0000${e.stage ?? ''}\u0000${e.reason}`;
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}
