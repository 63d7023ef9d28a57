// A band check in the address bar: the contrast's keys (analysis/contrast-params.ts) plus
// `band=name:LO-HI` (analysis/band-text.ts). The band check always averages the contrast's
// channels ('all' or a list).
import type { Contrast } from '../../../core/contrast/spec.ts';
import type { Band } from '../../../core/spectrum/bands.ts';
import { bandFromParams, bandText } from '../../analysis/band-text.ts';
import { contrastFromParams, paramsFromContrast } from '../../analysis/contrast-params.ts';

/** Contrast and band of the address bar (defaults filled); throws naming a bad key. */
export function bandCheckFromParams(params: Readonly<Record<string, string>>): { contrast: Contrast; band: Band } {
  return { contrast: contrastFromParams(params), band: bandFromParams(params) };
}

/** The address bar of a band check (every contrast key, so a link is complete). */
export function paramsFromBandCheck(c: Contrast, band: Band): Record<string, string> {
  return { ...paramsFromContrast(c), band: bandText(band) };
}
