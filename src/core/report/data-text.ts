/**
 * Sentences of the methods report's data section that come from the database facts alone: the
 * derivations the EEG channels were recorded as, and the warnings the ingest kept (methods.ts).
 */
import type { Contrast } from '../contrast/spec.ts';
import { referenceKey } from '../montage/labels.ts';
import type { DatabaseFacts } from './facts.ts';

const list = (xs: string[]) => (xs.length <= 1 ? xs.join('') : `${xs.slice(0, -1).join(', ')} and ${xs[xs.length - 1]}`);

const DERIVATION_RULES: Record<string, string> = {
  recorded: "The 'recorded' spectra of a channel were pooled only where every recording named the same reference for it.",
  'linked-mastoids':
    'A channel recorded against both mastoids (a label such as C3-M1M2) was used as recorded; a channel recorded against a common reference was referred to the mean of M1 and M2.',
  'contralateral-mastoid':
    'A channel recorded against the contralateral mastoid (the AASM derivations, e.g. C3-M2 and C4-M1) was used as recorded; a channel recorded against a common reference was referred to the contralateral mastoid (left − M2, right − M1).',
  average: 'The common average was computed only in recordings whose EEG channels share one reference.',
  bipolar:
    'A scalp-to-scalp derivation stored in a file (e.g. Pz-Oz) was used as recorded; other pairs were computed as the difference of two channels recorded against the same reference.',
};

/** The derivations the analysed channels were recorded as (from the EDF labels) and how the reference was obtained from them. */
export function derivationText(facts: DatabaseFacts | null, c: Contrast, channels: string[]): string | null {
  const all = facts?.recordedDerivations;
  if (!all || all.length === 0) return null;
  const wanted = new Set(channels);
  // per channel: reference (one spelling) → recordings
  const byChannel = new Map<string, Map<string, number>>();
  for (const d of all) {
    if (wanted.size > 0 && !wanted.has(d.channel)) continue;
    const ref = referenceKey(d.referenceElectrode) ?? 'the common reference (none named in the label)';
    if (!byChannel.has(d.channel)) byChannel.set(d.channel, new Map());
    const refs = byChannel.get(d.channel)!;
    refs.set(ref, (refs.get(ref) ?? 0) + d.recordings);
  }
  if (byChannel.size === 0) return null;
  const parts = [...byChannel].map(([ch, refs]) => `${ch} against ${list([...refs].map(([r, n]) => `${r} in ${n} recording${n === 1 ? '' : 's'}`))}`);
  return `EEG channels as recorded (the reference named in each EDF channel label): ${parts.join('; ')}. ${DERIVATION_RULES[c.reference] ?? ''}`.trim();
}

/** What the ingest kept in its warnings table (per step) and how many recordings are partial (recordings.status). */
export function warningText(facts: DatabaseFacts): string {
  const { byStep, recordingsByStatus } = facts.warnings;
  const total = Object.values(byStep).reduce((a, b) => a + b, 0);
  const partial = Object.entries(recordingsByStatus)
    .filter(([k]) => k.startsWith('partial'))
    .sort();
  const nPartial = partial.reduce((a, [, v]) => a + v, 0);
  const withWarnings = recordingsByStatus['ok-with-warnings'] ?? 0;
  if (total === 0 && nPartial === 0) return 'The ingest kept no warnings: every recording was read whole, with its scoring complete.';
  const steps = Object.entries(byStep)
    .sort()
    .map(([k, v]) => `${k} ${v}`)
    .join(', ');
  const are = (n: number) => (n === 1 ? 'is' : 'are');
  let s = `The ingest kept ${total} warning${total === 1 ? '' : 's'} (by step: ${steps}; listed in the database's warnings table). `;
  s +=
    nPartial > 0
      ? `Of the ${facts.recordings} recordings, ${nPartial} ${are(nPartial)} partial (${partial.map(([k, v]) => `${k} ${v}`).join(', ')}; partial data lack part of the signal, partial scoring leaves part of the night unscored)`
      : `None of the ${facts.recordings} recordings is partial`;
  return s + (withWarnings > 0 ? ` and ${withWarnings} ${are(withWarnings)} complete with warnings.` : '.');
}
