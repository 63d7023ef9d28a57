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

/** A subject, or one channel of it, left out of the contrast, in every stage or one: the contrast carries its exclusions. */
const exclusion = z.object({ subject: z.string().min(1), channel: z.string().min(1).optional(), stage: stage.optional(), reason: z.string().min(1) }).strict();

export const MEASURES = [
  'log-psd',
  'relative',
  'residual',
  'band-power',
  'relative-band-power',
  'offset',
  'exponent',
  'knee',
  'peak-height',
  'peak-center',
  'peak-width',
] as const;
export type MeasureName = (typeof MEASURES)[number];

/**
 * The most permutations a contrast may ask for: p = (1 + b)/(1 + m) then resolves 10⁻⁶, far
 * below any threshold in use, and the null distribution's maxima stay a few MB (our choice).
 */
export const MAX_PERMUTATIONS = 1_000_000;

export const REFERENCES = ['recorded', 'linked-mastoids', 'contralateral-mastoid', 'average', 'bipolar'] as const;

/** Spectral estimators stored at ingest (docs/design.md, spectra.estimator). */
export const ESTIMATORS = ['welch', 'multitaper'] as const;
export type EstimatorName = (typeof ESTIMATORS)[number];

/** How band edges are set: fixed as given, or centred on each subject's fitted peak (individual-bands.ts). */
export const BAND_DEFINITIONS = ['fixed', 'individual'] as const;
export type BandDefinition = (typeof BAND_DEFINITIONS)[number];

/** Measures whose bands can be individual (the band check too). */
export const INDIVIDUAL_BAND_MEASURES: readonly MeasureName[] = ['band-power', 'relative-band-power'];

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
    /** nuisance covariates: participants columns, numeric or categorical (text levels, k − 1 indicator columns); Freedman–Lane permutation */
    nuisance: z.array(z.string()).default([]),
    stage: stage.default('N2'),
    reference: z.enum(REFERENCES).default('recorded'),
    averaging: z.enum(['mean', 'median']).default('mean'),
    /** the spectra's estimator: Welch (default) or multitaper, as stored at ingest */
    estimator: z.enum(ESTIMATORS).default('welch'),
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
    /** band edges fixed as given, or individual: centred on each subject's fitted peak (band-power measures and the band check) */
    bandDefinition: z.enum(BAND_DEFINITIONS).default('fixed'),
    /** individual bands: where each subject's peak is looked for, Hz (default: the band's own edges) */
    peakSearchHz: z.tuple([hz, hz]).optional(),
    /** individual bands: half the band's width around the subject's peak, Hz (default: half the band's width) */
    halfWidthHz: z.number().finite().positive().optional(),
    /** aperiodic estimate the aperiodic and residual measures use ('fit' or 'irasa') */
    aperiodicMethod: z.enum(['fit', 'irasa']).default('fit'),
    statistic: z.enum(['welch-t', 'student-t', 'paired-t', 'pearson', 'spearman', 'linear-model-t']).optional(),
    correction: z.enum(['cluster-mass', 'cluster-size', 'tfce', 'none']).default('cluster-mass'),
    clusterP: z.number().gt(0).lt(1).default(0.05),
    permutations: z
      .number()
      .int()
      .positive()
      .max(MAX_PERMUTATIONS, { message: `at most ${MAX_PERMUTATIONS.toLocaleString('en-US')} permutations (p then resolves 10⁻⁶)` })
      .default(1000),
    seed: z.number().int().default(1),
    /** subjects or channels left out (a channel exclusion is missing data for that channel where the design allows it) */
    exclusions: z.array(exclusion).default([]),
    tfce: z.object({ E: z.number().positive(), H: z.number().positive(), dh: z.number().positive() }).partial().optional(),
    /**
     * the channels' neighbours, {channel: [neighbour, …]} (symmetrised; channels of the table not
     * in the contrast are ignored), instead of the neighbours of the stored positions
     */
    neighbours: z
      .record(z.string().min(1), z.array(z.string().min(1)), {
        error: '"neighbours" must be a table {channel: [neighbour, …]} (the command line reads a TSV file with --neighbours)',
      })
      .optional(),
  })
  .strict()
  .superRefine((c, ctx) => {
    if (c.fmaxHz <= c.fminHz) ctx.addIssue({ code: 'custom', path: ['fmaxHz'], message: `fmaxHz (${c.fmaxHz}) must exceed fminHz (${c.fminHz})` });
    if (c.design === 'groups' && !c.groups) ctx.addIssue({ code: 'custom', path: ['groups'], message: 'a groups design needs "groups": [first, second]' });
    if (c.design === 'paired' && !c.stages === !c.sessions)
      ctx.addIssue({ code: 'custom', path: ['stages'], message: 'a paired design needs either "stages" or "sessions" (two values)' });
    if (c.design === 'covariate' && !c.covariate)
      ctx.addIssue({ code: 'custom', path: ['covariate'], message: 'a covariate design needs "covariate": <numeric participants column>' });
    // a key the design does not use is refused, never silently ignored
    const others =
      c.design === 'paired' ? "a paired design compares each subject's two conditions" : 'a covariate design uses every subject with a value of the covariate';
    if (c.design !== 'groups' && c.groups)
      ctx.addIssue({ code: 'custom', path: ['groups'], message: `"groups" is used by the groups design only (${others}; leave subjects out with exclusions)` });
    for (const k of ['stages', 'sessions'] as const)
      if (c.design !== 'paired' && c[k]) ctx.addIssue({ code: 'custom', path: [k], message: `"${k}" is used by the paired design only` });
    if (c.design !== 'covariate' && c.covariate)
      ctx.addIssue({ code: 'custom', path: ['covariate'], message: '"covariate" is used by the covariate design only (nuisance covariates go in "nuisance")' });
    if (c.peakSearchHz && !(c.peakSearchHz[1] > c.peakSearchHz[0]))
      ctx.addIssue({
        code: 'custom',
        path: ['peakSearchHz'],
        message: `the search range's upper edge (${c.peakSearchHz[1]}) must exceed its lower edge (${c.peakSearchHz[0]})`,
      });
    if (c.peakSearchHz && c.bands && c.bands.length > 1)
      ctx.addIssue({
        code: 'custom',
        path: ['peakSearchHz'],
        message: 'one search range serves one band: give one band, or leave peakSearchHz out to search each band within its own edges',
      });
    if ((c.measure === 'band-power' || c.measure === 'relative-band-power' || c.measure.startsWith('peak-')) && !(c.bands && c.bands.length > 0)) {
      ctx.addIssue({ code: 'custom', path: ['bands'], message: `measure ${c.measure} needs "bands": [{name, loHz, hiHz}, …]` });
    }
  });

export type Contrast = z.output<typeof contrastSchema>;
export type ContrastJson = z.input<typeof contrastSchema>;
export type ContrastExclusion = z.output<typeof exclusion>;

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
