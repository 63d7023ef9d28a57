// A robustness run in the address bar: the band check's keys (contrast + band) plus the choices
// varied, each a list of the values ticked ('none' for an empty list), what each path is decided
// on, and the way each path is tested. An absent key means its default: every value the database
// stores (defaultPathChoices); decided on power only.
import { BAND_DEFINITIONS, type BandDefinition, type Contrast, type EstimatorName } from '../../../core/contrast/spec.ts';
import type { Band, BandMethod } from '../../../core/spectrum/bands.ts';
import {
  edgeVariants,
  PATH_DECISIONS,
  type PathChoices,
  type PathDataSet,
  type PathDecision,
  type PathMeasure,
  type PathTest,
} from '../../../core/verdict/index.ts';

type Averaging = PathDataSet['averaging'];

export const PATH_MEASURES: readonly PathMeasure[] = ['absolute', 'relative', 'residual'];
export const SUMMARIES: readonly BandMethod[] = ['mean', 'integral'];
export const PATH_TESTS: readonly PathTest[] = ['band-summary', 'frequency-wise'];

/** What the database offers for the analysis' stage. */
export interface StoredChoices {
  references: string[];
  averagings: string[];
  /** spectral estimators stored (Welch first) */
  estimators: EstimatorName[];
  fitRangesHz: [number, number][];
}

export class RobustnessParamError extends Error {
  override name = 'RobustnessParamError';
}

const rangeText = (r: readonly number[]) => `${r[0]}-${r[1]}`;

function parseRange(text: string, key: string): [number, number] {
  const m = /^([\d.]+)-([\d.]+)$/.exec(text);
  const r: [number, number] = m ? [Number(m[1]), Number(m[2])] : [NaN, NaN];
  if (!(Number.isFinite(r[0]) && Number.isFinite(r[1]) && r[1] > r[0]))
    throw new RobustnessParamError(`address bar: ${key} holds ${text}, not a range lo-hi in Hz`);
  return r;
}

function list(params: Readonly<Record<string, string>>, key: string): string[] | null {
  const v = params[key];
  if (v === undefined) return null;
  return v === 'none' || v === '' ? [] : v.split(',');
}

function pick<T extends string>(values: string[] | null, allowed: readonly T[], fallback: readonly T[], key: string): T[] {
  if (values === null) return [...fallback];
  for (const v of values) if (!allowed.includes(v as T)) throw new RobustnessParamError(`address bar: ${key} holds ${v}; allowed: ${allowed.join(', ')}`);
  return values as T[];
}

/** The two default denominators of the relative measure: the contrast's relative range and its analysis range. */
export function defaultDenominators(c: Contrast): [number, number][] {
  const a: [number, number] = [...c.relativeRangeHz];
  const b: [number, number] = [c.fminHz, c.fmaxHz];
  return a[0] === b[0] && a[1] === b[1] ? [a] : [a, b];
}

/** Choices and test of the address bar; values the database does not store are refused. */
export function pathChoicesFromParams(
  params: Readonly<Record<string, string>>,
  c: Contrast,
  band: Band,
  stored: StoredChoices,
): { choices: PathChoices; test: PathTest } {
  const fits = list(params, 'fits');
  const fitRangesHz = fits === null ? stored.fitRangesHz.map((r) => [...r] as [number, number]) : fits.map((f) => parseRange(f, 'fits'));
  for (const r of fitRangesHz) {
    if (!stored.fitRangesHz.some((s) => s[0] === r[0] && s[1] === r[1]))
      throw new RobustnessParamError(
        `address bar: fit range ${r[0]}–${r[1]} Hz is not stored (stored: ${stored.fitRangesHz.map((s) => `${s[0]}–${s[1]} Hz`).join(', ') || 'none'})`,
      );
  }
  const dens = list(params, 'denominators');
  const test = (params.test ?? 'band-summary') as PathTest;
  if (!PATH_TESTS.includes(test)) throw new RobustnessParamError(`address bar: test holds ${test}; allowed: ${PATH_TESTS.join(', ')}`);
  return {
    choices: {
      measures: pick(list(params, 'measures'), PATH_MEASURES, PATH_MEASURES, 'measures'),
      relativeDenominatorsHz: dens === null ? defaultDenominators(c) : dens.map((d) => parseRange(d, 'denominators')),
      references: pick(list(params, 'references'), stored.references, stored.references, 'references'),
      averagings: pick(list(params, 'averagings'), stored.averagings, stored.averagings, 'averagings') as Averaging[],
      summaries: pick(list(params, 'summaries'), SUMMARIES, SUMMARIES, 'summaries'),
      fitRangesHz,
      bands: params.edges === '0' ? [{ ...band }] : edgeVariants(band),
      decisions: pick<PathDecision>(list(params, 'decisions'), PATH_DECISIONS, ['power'], 'decisions'),
      estimators: pick(list(params, 'estimators'), stored.estimators, stored.estimators, 'estimators'),
      // individual bands need the fitted peaks, stored with the fits
      bandDefinitions: pick<BandDefinition>(
        list(params, 'definitions'),
        BAND_DEFINITIONS,
        stored.fitRangesHz.length > 0 ? BAND_DEFINITIONS : ['fixed'],
        'definitions',
      ),
    },
    test,
  };
}

/** The address bar keys of a choice list ('none' when empty). */
export function listParam(values: readonly string[]): string {
  return values.length === 0 ? 'none' : values.join(',');
}

export function rangesParam(ranges: readonly (readonly number[])[]): string {
  return listParam(ranges.map(rangeText));
}

/** Every choice key of the address bar for these choices (so a link is complete). */
export function paramsFromChoices(choices: PathChoices, test: PathTest, band: Band): Record<string, string> {
  const varied = choices.bands.length > 1 || choices.bands[0].loHz !== band.loHz || choices.bands[0].hiHz !== band.hiHz;
  return {
    measures: listParam(choices.measures),
    denominators: rangesParam(choices.relativeDenominatorsHz),
    references: listParam(choices.references),
    averagings: listParam(choices.averagings),
    summaries: listParam(choices.summaries),
    fits: rangesParam(choices.fitRangesHz),
    estimators: listParam(choices.estimators ?? ['welch']),
    definitions: listParam(choices.bandDefinitions ?? ['fixed']),
    edges: varied ? '1' : '0',
    decisions: listParam(choices.decisions ?? ['power']),
    test,
  };
}

/** Toggle one value in a list (keeping the order of `all`). */
export function toggled<T>(values: readonly T[], value: T, on: boolean, all: readonly T[], same: (a: T, b: T) => boolean = (a, b) => a === b): T[] {
  const has = (v: T) => values.some((x) => same(x, v));
  return all.filter((v) => (same(v, value) ? on : has(v)));
}
