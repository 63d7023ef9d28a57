/** The line compare and band-check print about the part of the split a result used (nothing without a split). */
import type { PartFields } from '../core/confirmation/stamp.ts';

export function partLine(r: PartFields): string | null {
  if (!r.part || !r.split) return null;
  const s = r.split;
  const total = s.subjects.exploration + s.subjects.confirmation;
  return `${r.part} part of split ${s.id} (${s.subjects[r.part]} of ${total} subjects)${r.blinded ? '; groups blinded, group sizes pooled' : ''}`;
}
