// A deviation in the address bar: the measure's contrast keys (stage, reference, averaging,
// channels, fminHz, fmaxHz, measure, groupColumn, as analysis/contrast-params.ts writes them) plus
// referenceGroup, covariates (comma-separated) and subject (whose map and band are shown); channel
// picks the spectrum shown and is not part of the analysis.
import { parseDeviationSpec, type DeviationSpec } from '../../../core/planning/index.ts';
import { contrastJsonFromParams } from '../../analysis/contrast-params.ts';

const SPEC_KEYS = ['groupColumn', 'stage', 'reference', 'averaging', 'channels', 'fminHz', 'fmaxHz', 'measure', 'aperiodicMethod'] as const;

/** Settings and subject of the address bar; the reference group defaults to the first of `groups` (the form's default pair). Throws naming a bad key. */
export function deviationFromParams(params: Readonly<Record<string, string>>): { spec: DeviationSpec; subject: string | null } {
  const json = contrastJsonFromParams(params) as Record<string, unknown>;
  const picked: Record<string, unknown> = {};
  for (const k of SPEC_KEYS) if (json[k] !== undefined) picked[k] = json[k];
  const groups = params.groups?.split(',') ?? [];
  picked.referenceGroup = params.referenceGroup ?? groups[0] ?? '';
  if (params.covariates) picked.covariates = params.covariates.split(',').filter((c) => c !== '');
  return { spec: parseDeviationSpec(picked), subject: params.subject || null };
}

/** The address bar of a deviation (every key, so a link is complete). */
export function paramsFromDeviation(s: DeviationSpec, subject: string | null): Record<string, string> {
  return {
    groupColumn: s.groupColumn,
    referenceGroup: s.referenceGroup,
    covariates: s.covariates.join(','),
    stage: s.stage,
    reference: s.reference,
    averaging: s.averaging,
    channels: s.channels === 'all' ? 'all' : s.channels.join(','),
    fminHz: String(s.fminHz),
    fmaxHz: String(s.fmaxHz),
    measure: s.measure,
    aperiodicMethod: s.aperiodicMethod,
    ...(subject ? { subject } : {}),
  };
}

/** The link to one subject's deviation map (the cohort and quality views' per-subject links); run=1 opens it at once. */
export function deviationLink(subject: string, settings: { stage?: string; reference?: string } = {}): string {
  const q = new URLSearchParams({ subject, ...settings, run: '1' });
  return `#/deviation?${q.toString()}`;
}
