/**
 * A result stamped with the part of the split it used (and the split), its group sizes pooled
 * when it compared blinded groups (blind-results.ts). Without a split a result is left as it is.
 */
import type { CompareResult } from '../contrast/run.ts';
import type { BandCheckResult } from '../verdict/band-check.ts';
import type { SpecificationCurve } from '../verdict/paths.ts';
import { comparesBlindedGroups } from './blinding.ts';
import { blindBandCheckResult, blindCompareResult, blindCurve } from './blind-results.ts';
import type { PartView } from './part-data.ts';
import type { PartFields } from './stamp.ts';

function stamp<R extends { contrast: CompareResult['contrast'] }>(r: R, view: PartView | null, blind: (r: R) => R): R & PartFields {
  if (view === null) return r;
  const blinded = comparesBlindedGroups(r.contrast, view.blinding);
  return { ...(blinded ? blind(r) : r), part: view.part, split: view.split, blinded };
}

export function compareOnPart<R extends CompareResult>(r: R, view: PartView | null): R & PartFields {
  return stamp(r, view, (x) => ({ ...x, ...blindCompareResult(x) }));
}

export function bandCheckOnPart<R extends BandCheckResult>(r: R, view: PartView | null): R & PartFields {
  return stamp(r, view, (x) => ({ ...x, ...blindBandCheckResult(x) }));
}

export function curveOnPart(c: SpecificationCurve, view: PartView | null): SpecificationCurve & PartFields {
  return stamp(c, view, blindCurve);
}
