// The defaults of every analysis form, in one place. Contrast settings default to what
// `bandwise compare` fills in (the contrast JSON schema, src/core/contrast/spec.ts), so a form
// opens on the command line's analysis; the rest depend on what the database stores.
import { contrastSchema } from '../../core/contrast/spec.ts';
import { DEFAULT_BANDS, type Band } from '../../core/spectrum/bands.ts';
import type { FormChoices } from './form-choices.ts';

const field = contrastSchema.shape;

/** The contrast JSON's defaults (the command line's). */
export const CONTRAST_DEFAULTS = {
  groupColumn: field.groupColumn.parse(undefined),
  stage: field.stage.parse(undefined),
  reference: field.reference.parse(undefined),
  averaging: field.averaging.parse(undefined),
  fminHz: field.fminHz.parse(undefined),
  fmaxHz: field.fmaxHz.parse(undefined),
  measure: field.measure.parse(undefined),
  relativeRangeHz: field.relativeRangeHz.parse(undefined),
  bandMethod: field.bandMethod.parse(undefined),
  aperiodicMethod: field.aperiodicMethod.parse(undefined),
  correction: field.correction.parse(undefined),
  clusterP: field.clusterP.parse(undefined),
  permutations: field.permutations.parse(undefined),
  seed: field.seed.parse(undefined),
};

/** The band of a new band check or robustness run: sigma 12–16 Hz (src/core/spectrum/bands.ts). */
export const DEFAULT_BAND: Band = DEFAULT_BANDS.find((b) => b.name === 'sigma')!;

/** The stages a new paired design compares. */
export const DEFAULT_PAIRED_STAGES = 'N2,N3';

/** The command line's default when the database stores it, else the first stored value. */
function storedOr(value: string, stored: readonly string[]): string {
  return stored.length === 0 || stored.includes(value) ? value : stored[0];
}

/** The reference every view opens with (spectra, contrast, band check, robustness): the command line's default when stored. */
export function defaultReference(stored: readonly string[]): string {
  return storedOr(CONTRAST_DEFAULTS.reference, stored);
}

/** The address-bar settings of a new analysis: two groups of the `group` column (or the first text column), the default stage and reference. */
export function formDefaults(c: FormChoices): Record<string, string> {
  const column = c.textColumns.has(CONTRAST_DEFAULTS.groupColumn)
    ? CONTRAST_DEFAULTS.groupColumn
    : ([...c.textColumns.keys()][0] ?? CONTRAST_DEFAULTS.groupColumn);
  const values = c.textColumns.get(column) ?? [];
  return {
    design: 'groups',
    groupColumn: column,
    groups: values.slice(0, 2).join(','),
    stage: storedOr(CONTRAST_DEFAULTS.stage, c.stages),
    reference: defaultReference(c.references),
    averaging: storedOr(CONTRAST_DEFAULTS.averaging, c.averagings),
  };
}
