/**
 * What `bandwise deviation` scores: the measure (as a contrast defines it: stage, reference,
 * averaging, channels, frequency range, bands), the reference group (a value of a participants
 * column) and the covariates regressed out on the reference group. Validated with zod like the
 * contrast JSON; the measure part becomes a Contrast so the contrast's measure code computes it.
 */
import { z } from 'zod';
import { MEASURES, REFERENCES, parseContrast, type Contrast, type ContrastJson } from '../contrast/spec.ts';
import { BandError, parseBand, type Band } from '../spectrum/bands.ts';

/** Measures with a value at every point (the peak centre and width may be missing: not scored). */
export const DEVIATION_MEASURES = MEASURES.filter((m) => m !== 'peak-center' && m !== 'peak-width');

const hz = z.number().finite().nonnegative();
const band = z.union([z.string(), z.object({ name: z.string().min(1), loHz: hz, hiHz: hz })]).transform((b, ctx): Band => {
  if (typeof b !== 'string') return b;
  try {
    return parseBand(b);
  } catch (e) {
    if (!(e instanceof BandError)) throw e;
    ctx.addIssue({ code: 'custom', message: e.message });
    return z.NEVER;
  }
});

export const deviationSpecSchema = z
  .object({
    groupColumn: z.string().min(1).default('group'),
    referenceGroup: z.string().min(1),
    /** participants columns regressed out on the reference group (text columns as indicator columns) */
    covariates: z.array(z.string().min(1)).default([]),
    stage: z.enum(['W', 'N1', 'N2', 'N3', 'R']).default('N2'),
    reference: z.enum(REFERENCES).default('recorded'),
    averaging: z.enum(['mean', 'median']).default('mean'),
    session: z.string().optional(),
    channels: z.union([z.literal('all'), z.array(z.string()).min(1)]).default('all'),
    fminHz: hz.default(1),
    fmaxHz: hz.default(30),
    measure: z.enum(DEVIATION_MEASURES as [string, ...string[]]).default('log-psd'),
    relativeRangeHz: z.tuple([hz, hz]).default([0.5, 45]),
    bands: z.array(band).optional(),
    bandMethod: z.enum(['mean', 'integral']).default('mean'),
    aperiodicMethod: z.enum(['fit', 'irasa']).default('fit'),
  })
  .strict();

export type DeviationSpec = z.output<typeof deviationSpecSchema>;
export type DeviationSpecJson = z.input<typeof deviationSpecSchema>;

export class DeviationSpecError extends Error {
  override name = 'DeviationSpecError';
}

/** Validates the settings and fills the defaults; throws naming every bad key (the measure's keys checked as the contrast checks them). */
export function parseDeviationSpec(value: unknown): DeviationSpec {
  const r = deviationSpecSchema.safeParse(value);
  if (!r.success) {
    const lines = r.error.issues.map((i) => `  ${i.path.join('.') || '(settings)'}: ${i.message}`);
    throw new DeviationSpecError(`invalid deviation settings:\n${lines.join('\n')}`);
  }
  if (new Set(r.data.covariates).size !== r.data.covariates.length)
    throw new DeviationSpecError(`invalid deviation settings:\n  covariates: a column is named twice (${r.data.covariates.join(', ')})`);
  if (r.data.covariates.includes(r.data.groupColumn))
    throw new DeviationSpecError(`invalid deviation settings:\n  covariates: ${r.data.groupColumn} is the group column`);
  try {
    measureContrast(r.data);
  } catch (e) {
    throw new DeviationSpecError(e instanceof Error ? e.message.replace('invalid contrast', 'invalid deviation settings') : String(e));
  }
  return r.data;
}

/** The measure part as a contrast (a groups design of the reference group alone), for the contrast's measure code. */
export function measureContrast(s: DeviationSpec): Contrast {
  const json: ContrastJson = {
    design: 'groups',
    groupColumn: s.groupColumn,
    groups: [s.referenceGroup, s.referenceGroup],
    stage: s.stage,
    reference: s.reference,
    averaging: s.averaging,
    ...(s.session !== undefined ? { session: s.session } : {}),
    channels: s.channels,
    fminHz: s.fminHz,
    fmaxHz: s.fmaxHz,
    measure: s.measure as Contrast['measure'],
    relativeRangeHz: s.relativeRangeHz,
    ...(s.bands ? { bands: s.bands } : {}),
    bandMethod: s.bandMethod,
    aperiodicMethod: s.aperiodicMethod,
  };
  return parseContrast(json);
}
