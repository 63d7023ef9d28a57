// A band check in the address bar: the contrast's keys as the contrast view writes them
// (views/contrast/contrast-params.ts) plus `band=name:lo-hi`. The band check always averages the
// contrast's channels ('all' or a list).
import type { Contrast } from '../../../core/contrast/spec.ts';
import { DEFAULT_BANDS, SIGMA_PRESETS, checkBand, parseBand, type Band } from '../../../core/spectrum/bands.ts';
import type { FormChoices } from '../contrast/contrast-data.ts';
import { contrastFromParams, paramsFromContrast } from '../contrast/contrast-params.ts';

/** Named bands offered as presets (edges stay editable). */
export const BAND_PRESETS: readonly Band[] = [...DEFAULT_BANDS.filter((b) => b.name !== 'broadband'), ...SIGMA_PRESETS];

export const DEFAULT_BAND: Band = DEFAULT_BANDS.find((b) => b.name === 'sigma')!;

/** The band of the address bar (`band=name:lo-hi`), the sigma band when absent. */
export function bandFromParams(params: Readonly<Record<string, string>>): Band {
  const text = params.band;
  if (text === undefined || text === '') return { ...DEFAULT_BAND };
  return parseBand(text);
}

export function bandParam(band: Band): string {
  checkBand(band);
  return `${band.name}:${band.loHz}-${band.hiHz}`;
}

/** A band with new edges: named after its preset when the edges match one, else plain "band". */
export function withEdges(loHz: number, hiHz: number): Band {
  const preset = BAND_PRESETS.find((b) => b.loHz === loHz && b.hiHz === hiHz);
  return checkBand(preset ? { ...preset } : { name: 'band', loHz, hiHz });
}

/** Form defaults of a new analysis: two groups of the `group` column (or the first text column), N2, the first stored reference. */
export function formDefaults(c: FormChoices): Record<string, string> {
  const column = c.textColumns.has('group') ? 'group' : ([...c.textColumns.keys()][0] ?? 'group');
  const values = c.textColumns.get(column) ?? [];
  return { design: 'groups', groupColumn: column, groups: values.slice(0, 2).join(','), stage: c.stages.includes('N2') ? 'N2' : (c.stages[0] ?? 'N2'), reference: c.references[0] ?? 'recorded' };
}

/** Contrast and band of the address bar (defaults filled); throws naming a bad key. */
export function bandCheckFromParams(params: Readonly<Record<string, string>>): { contrast: Contrast; band: Band } {
  return { contrast: contrastFromParams(params), band: bandFromParams(params) };
}

/** The address bar of a band check (every contrast key, so a link is complete). */
export function paramsFromBandCheck(c: Contrast, band: Band): Record<string, string> {
  return { ...paramsFromContrast(c), band: bandParam(band) };
}
