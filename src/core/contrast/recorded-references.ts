/**
 * A contrast on the 'recorded' reference pools a channel's spectra only when every recording was
 * recorded against the same reference for it, as the EDF labels name it (one spelling per
 * reference: referenceKey in src/core/montage/labels.ts; "C3", "C3-REF" and "C3-Ref" all name
 * no site and count as one). C3-M2 of an AASM export and C3 against an amplifier's common
 * reference are different signals: pooling them would compare montages, not people.
 *
 * Refused, not split (our choice): a channel split by reference would leave every subject with
 * only some of the contrast's channels, and a subject missing a channel is left out, so a split
 * would quietly shrink the groups to the recordings of one montage. The message names the
 * channels, each reference and its subjects, so the user can compare on a reference computed
 * alike for every recording (contralateral-mastoid, …) or choose the channels recorded alike.
 */
import { referenceKey } from '../montage/labels.ts';
import type { RecordedReference } from './data.ts';

/** Subjects shown per reference in the message; the rest are counted. */
const SHOWN = 8;

const key = (subject: string, session: string | null, channel: string) => `${subject}\u0000${session ?? ''}\u0000${channel}`;

const names = (subjects: string[]) =>
  subjects.length <= SHOWN ? subjects.join(', ') : `${subjects.slice(0, SHOWN).join(', ')} and ${subjects.length - SHOWN} more`;

const list = (xs: string[]) => (xs.length <= 1 ? xs.join('') : `${xs.slice(0, -1).join(', ')} and ${xs[xs.length - 1]}`);

/**
 * The refusal message when a channel of `channels` has different recorded references among the
 * (subject, session) recordings in `used`; null when each channel has one reference throughout.
 */
export function mixedRecordedReferences(
  channels: readonly string[],
  used: readonly { subject: string; session: string | null }[],
  references: readonly RecordedReference[],
): string | null {
  const byKey = new Map<string, RecordedReference[]>();
  for (const r of references) {
    const k = key(r.subject, r.session, r.channel);
    if (!byKey.has(k)) byKey.set(k, []);
    byKey.get(k)!.push(r);
  }
  const lines: string[] = [];
  for (const channel of channels) {
    // reference (one spelling) → subjects, in the order met
    const groups = new Map<string, string[]>();
    for (const u of used) {
      for (const r of byKey.get(key(u.subject, u.session, channel)) ?? []) {
        const ref = referenceKey(r.referenceElectrode) ?? 'the common reference, not named in the label';
        if (!groups.has(ref)) groups.set(ref, []);
        const subjects = groups.get(ref)!;
        if (!subjects.includes(u.subject)) subjects.push(u.subject);
      }
    }
    if (groups.size > 1)
      lines.push(`channel ${channel} was recorded against different references: ${list([...groups].map(([ref, subjects]) => `${ref} (${names(subjects)})`))}`);
  }
  if (lines.length === 0) return null;
  return (
    `${lines.join('; ')}. Their 'recorded' spectra are different signals and are not pooled: ` +
    'compare on a reference computed alike for every recording (e.g. contralateral-mastoid), or choose channels recorded alike.'
  );
}
