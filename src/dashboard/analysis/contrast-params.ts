// A contrast in the address bar: each key of the contrast JSON (src/core/contrast/spec.ts) as one
// hash parameter, lists joined by ',', ranges by '-', bands as analysis/band-text.ts writes them and
// the exclusions as JSON text; parsed back through parseContrast.
import { parseContrast, type Contrast, type ContrastJson } from '../../core/contrast/spec.ts';
import { bandText, parseBandText } from './band-text.ts';

const LIST_KEYS = ['groups', 'stages', 'sessions', 'nuisance'] as const;
const NUMBER_KEYS = ['fminHz', 'fmaxHz', 'clusterP', 'permutations', 'seed'] as const;
const TEXT_KEYS = [
  'design',
  'groupColumn',
  'covariate',
  'session',
  'stage',
  'reference',
  'averaging',
  'measure',
  'statistic',
  'correction',
  'bandMethod',
  'aperiodicMethod',
  'estimator',
  'bandDefinition',
] as const;

/** The contrast JSON written by a hash's parameters (not yet validated). */
export function contrastJsonFromParams(params: Readonly<Record<string, string>>): ContrastJson {
  const out: Record<string, unknown> = {};
  for (const k of TEXT_KEYS) if (params[k] !== undefined && params[k] !== '') out[k] = params[k];
  for (const k of NUMBER_KEYS) {
    if (params[k] === undefined || params[k] === '') continue;
    const v = Number(params[k]);
    if (!Number.isFinite(v)) throw new Error(`address bar: ${k}=${params[k]} is not a number`);
    out[k] = v;
  }
  for (const k of LIST_KEYS) if (params[k] !== undefined && params[k] !== '') out[k] = params[k].split(',');
  if (params.channels !== undefined) out.channels = params.channels === 'all' ? 'all' : params.channels.split(',').filter((c) => c !== '');
  if (params.channelAverage !== undefined) out.channelAverage = params.channelAverage === 'true';
  if (params.relativeRangeHz !== undefined) out.relativeRangeHz = params.relativeRangeHz.split('-').map(Number);
  // individual bands: optional, written only when given
  if (params.peakSearchHz) out.peakSearchHz = params.peakSearchHz.split('-').map(Number);
  if (params.halfWidthHz) out.halfWidthHz = Number(params.halfWidthHz);
  if (params.bands !== undefined) {
    out.bands = params.bands.split(',').map((b) => parseBandText(b));
  }
  if (params.exclusions !== undefined && params.exclusions !== '') {
    try {
      out.exclusions = JSON.parse(params.exclusions);
    } catch {
      throw new Error('address bar: exclusions is not valid JSON');
    }
  }
  // the form keeps every design's fields in the address; the contrast carries only its design's
  if ((out.design ?? 'groups') !== 'groups') delete out.groups;
  if (out.design !== 'paired') {
    delete out.stages;
    delete out.sessions;
  }
  if (out.design !== 'covariate') delete out.covariate;
  return out as ContrastJson;
}

/** The hash parameters of a contrast (every key, defaults included, so a link is complete). */
export function paramsFromContrast(c: Contrast): Record<string, string> {
  const out: Record<string, string> = {};
  const record = c as unknown as Record<string, unknown>;
  for (const k of TEXT_KEYS) if (typeof record[k] === 'string') out[k] = record[k] as string;
  for (const k of NUMBER_KEYS) out[k] = String(record[k]);
  for (const k of LIST_KEYS) {
    const v = record[k];
    if (Array.isArray(v) && (v.length > 0 || k !== 'nuisance')) out[k] = v.join(',');
  }
  out.channels = c.channels === 'all' ? 'all' : c.channels.join(',');
  out.channelAverage = String(c.channelAverage);
  out.relativeRangeHz = c.relativeRangeHz.join('-');
  if (c.peakSearchHz) out.peakSearchHz = c.peakSearchHz.join('-');
  if (c.halfWidthHz !== undefined) out.halfWidthHz = String(c.halfWidthHz);
  if (c.bands) out.bands = c.bands.map(bandText).join(',');
  // as JSON text (the address escapes it); empty when none, so a run without exclusions clears them
  out.exclusions = c.exclusions.length > 0 ? JSON.stringify(c.exclusions) : '';
  return out;
}

/** The contrast of the address bar, validated (throws ContrastSpecError naming bad keys). */
export function contrastFromParams(params: Readonly<Record<string, string>>): Contrast {
  return parseContrast(contrastJsonFromParams(params));
}

/** The contrast JSON as `bandwise compare --contrast` reads it. */
export function contrastFileText(c: Contrast): string {
  return JSON.stringify(c, null, 2) + '\n';
}
