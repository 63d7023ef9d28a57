/**
 * The exclusion list as TSV (subject, channel, reason; channel empty or "all" for the whole
 * subject). The dashboard exports and imports it; `bandwise compare --exclusions` reads it.
 */
import type { Exclusion } from './data.ts';

export function exclusionsToTsv(list: readonly Exclusion[]): string {
  const clean = (s: string) => s.replace(/[\t\r\n]+/g, ' ');
  return ['subject\tchannel\treason', ...list.map((e) => `${clean(e.subject)}\t${e.channel ? clean(e.channel) : 'all'}\t${clean(e.reason)}`)].join('\n') + '\n';
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
    const reason = col('reason') >= 0 ? (cells[col('reason')] ?? '').trim() : '';
    return { subject, channel: ch === '' || ch.toLowerCase() === 'all' ? null : ch, reason: reason || 'no reason given' };
  });
}
