/**
 * The contrast: one defined comparison, as JSON. The dashboard saves it and `bandwise compare`
 * reads it; the keys are a public interface (docs/design.md). Differences and signs are always
 * groups[1] minus groups[0] (paired: second minus first).
 */
import { z } from 'zod';
import { BandError, parseBand, type Band } from '../spectrum/bands.ts';

const stage = z.enum(['W', 'N1', 'N2', 'N3', 'R']);
const hz = z.number().finite().nonnegative();
const bandObject = z.object({ name: z.string().min(1), loHz: hz, hiHz: hz }).refine((b) => b.hiHz > b.loHz, { message: 'hiHz must exceed loHz' });
/** A band as {name, loHz, hiHz} or as text in the one band grammar (bands.ts parseBand: "12-16", "sigma:12-16", "sigma"). */
const band = z.union([z.string(), bandObject]).transform((b, ctx): Band => {
  if (typeof b !== 'string') return b;
  try {
    return parseBand(b);
  } catch (e) {
    if (!(e instanceof BandError)) throw e;
    ctx.addIssue({ code: 'custom', message: e.message });
    return z.NEVER;
  }
});

export const MEASURES = ['log-psd', 'relative', 'residual', 'band-power', 'relative-band-power', 'offset', 'exponent', 'knee', 'peak-height', 'peak-center', 'peak-width'] as const;
export type MeasureName = (typeof MEASURES)[number];

/**
 * The most permutations a contrast may ask for: p = (1 + b)/(1 + m) then resolves 10⁻⁶, far
 * below any threshold in use, and the null distribution's maxima stay a few MB (our choice).
 */
export const MAX_PERMUTATIONS = 1_000_000;

export const REFERENCES = ['recorded', 'linked-mastoids', 'contralateral-mastoid', 'average', 'bipolar'] as const;

export const contrastSchema = z
  .object({
    design: z.enum(['groups', 'paired', 'covariate']),
    groupColumn: z.string().min(1).default('group'),
    groups: z.tuple([z.string(), z.string()]).optional(),
    /** paired designs: two stages of the same recording, or two sessions of the same stage */
    stages: z.tuple([stage, stage]).optional(),
    sessions: z.tuple([z.string(), z.string()]).optional(),
    /** which session to use when subjects have several and the design is not over sessions */
    session: z.string().optional(),
    covariate: z.string().optional(),
    /** nuisance covariates (numeric participants columns; Freedman–Lane permutation) */
    nuisance: z.array(z.string()).default([]),
    stage: stage.default('N2'),
    reference: z.enum(REFERENCES).default('recorded'),
    averaging: z.enum(['mean', 'median']).default('mean'),
    /** 'all' or a list of channel names */
    channels: z.union([z.literal('all'), z.array(z.string()).min(1)]).default('all'),
    /** average the measure over the chosen channels (frequency-only clusters) */
    channelAverage: z.boolean().default(false),
    fminHz: hz.default(1),
    fmaxHz: hz.default(30),
    measure: z.enum(MEASURES).default('log-psd'),
    /** denominator range of relative measures, Hz */
    relativeRangeHz: z.tuple([hz, hz]).default([0.5, 45]),
    /** bands of band-power measures and the band of peak measures */
    bands: z.array(band).optional(),
    bandMethod: z.enum(['mean', 'integral']).default('mean'),
    /** aperiodic estimate the aperiodic and residual measures use ('fit' or 'irasa') */
    aperiodicMethod: z.enum(['fit', 'irasa']).default('fit'),
    statistic: z.enum(['welch-t', 'student-t', 'paired-t', 'pearson', 'spearman', 'linear-model-t']).optional(),
    correction: z.enum(['cluster-mass', 'cluster-size', 'tfce', 'none']).default('cluster-mass'),
    clusterP: z.number().gt(0).lt(1).default(0.05),
    permutations: z.number().int().positive().max(MAX_PERMUTATIONS, { message: `at most ${MAX_PERMUTATIONS.toLocaleString('en-US')} permutations (p then resolves 10⁻⁶)` }).default(1000),
    seed: z.number().int().default(1),
    tfce: z.object({ E: z.number().positive(), H: z.number().positive(), dh: z.number().positive() }).partial().optional(),
  })
  .strict()
  .superRefine((c, ctx) => {
    if (c.fmaxHz <= c.fminHz) ctx.addIssue({ code: 'custom', path: ['fmaxHz'], message: `fmaxHz (${c.fmaxHz}) must exceed fminHz (${c.fminHz})` });
    if (c.design === 'groups' && !c.groups) ctx.addIssue({ code: 'custom', path: ['groups'], message: 'a groups design needs "groups": [first, second]' });
    if (c.design === 'paired' && !c.stages === !c.sessions) ctx.addIssue({ code: 'custom', path: ['stages'], message: 'a paired design needs either "stages" or "sessions" (two values)' });
    if (c.design === 'covariate' && !c.covariate) ctx.addIssue({ code: 'custom', path: ['covariate'], message: 'a covariate design needs "covariate": <numeric participants column>' });
    if ((c.measure === 'band-power' || c.measure === 'relative-band-power' || c.measure.startsWith('peak-')) && !(c.bands && c.bands.length > 0)) {
      ctx.addIssue({ code: 'custom', path: ['bands'], message: `measure ${c.measure} needs "bands": [{name, loHz, hiHz}, …]` });
    }
  });

export type Contrast = z.output<typeof contrastSchema>;
export type ContrastJson = z.input<typeof contrastSchema>;

export class ContrastSpecError extends Error {
  override name = 'ContrastSpecError';
}

/** Validates a contrast object (parsed JSON) and fills the defaults; throws naming every bad key. */
export function parseContrast(value: unknown): Contrast {
  const r = contrastSchema.safeParse(value);
  if (!r.success) {
    const issues = r.error.issues.map((i) => `${i.path.join('.') || '(contrast)'}: ${i.message}`);
    throw new ContrastSpecError(`invalid contrast: ${issues.join('; ')}`);
  }
  return r.data;
}
