// The views of the dashboard and their address-bar form: #/<view>?<key>=<value>&…
// The settings of a view live in the hash, so a link reopens the same state.

export interface ViewInfo {
  id: string;
  label: string;
  /** What the view shows; for views not built yet, what will come. */
  summary: string;
  ready: boolean;
}

export const VIEWS: readonly ViewInfo[] = [
  { id: 'cohort', label: 'Cohort', summary: 'Groups and their sizes, participants, recordings and failed inputs.', ready: true },
  {
    id: 'quality',
    label: 'Quality screen',
    summary: 'A subjects × channels grid coloured by quality score, the list of flags with reasons, each spectrum against the cohort, and the exclusion list.',
    ready: true,
  },
  {
    id: 'spectra',
    label: 'Spectra',
    summary: 'Group mean spectra with 95 % confidence bands per stage, channel and reference, aperiodic fits overlaid, and scalp maps of band power.',
    ready: true,
  },
  {
    id: 'contrast',
    label: 'Contrast',
    summary: 'Group, paired or covariate contrasts over channels × frequencies with cluster-based permutation correction.',
    ready: true,
  },
  {
    id: 'band-check',
    label: 'Band check',
    summary: 'Whether a band effect is band-specific, a broadband offset shift or an exponent change.',
    ready: true,
  },
  {
    id: 'robustness',
    label: 'Robustness',
    summary: 'The same contrast over every combination of analysis choices, as a specification curve.',
    ready: true,
  },
  {
    id: 'workflow',
    label: 'Split and plans',
    summary: 'The exploration/confirmation split (blinded or not), the locked analysis plans and their confirmations, and the command of each step.',
    ready: true,
  },
  {
    id: 'power',
    label: 'Power',
    summary: "The power of a whole contrast by simulation from a reference group's own spectra, as a curve over subjects per group with intervals.",
    ready: true,
  },
  {
    id: 'deviation',
    label: 'Deviation',
    summary:
      'Every subject scored against a reference group per channel and frequency: a map per subject, its spectrum against the reference band, shares per group.',
    ready: true,
  },
  { id: 'report', label: 'Methods report', summary: 'Every spectral and statistical parameter written out as methods text.', ready: true },
];

export const DEFAULT_VIEW = 'cohort';

export interface Route {
  view: string;
  params: Readonly<Record<string, string>>;
}

/** Parse a location hash such as "#/cohort?by=sex"; unknown or empty views fall back to the default. */
export function parseHash(hash: string): Route {
  const body = hash.replace(/^#\/?/, '');
  const q = body.indexOf('?');
  const id = decodeURIComponent(q < 0 ? body : body.slice(0, q));
  const params: Record<string, string> = {};
  if (q >= 0) for (const [k, v] of new URLSearchParams(body.slice(q + 1))) params[k] = v;
  const view = VIEWS.some((v) => v.id === id) ? id : DEFAULT_VIEW;
  return { view, params };
}

/** The hash for a route; parameters sorted by key so equal states give equal links. */
export function formatHash(route: Route): string {
  const keys = Object.keys(route.params).sort();
  const search = new URLSearchParams(keys.map((k) => [k, route.params[k]])).toString();
  return `#/${route.view}${search ? `?${search}` : ''}`;
}
