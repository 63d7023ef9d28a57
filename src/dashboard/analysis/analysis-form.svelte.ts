// The settings of an analysis view, kept in the address bar (#/<view>?key=value, contrast keys as
// views/contrast/contrast-params.ts writes them): the database's choices, the address with the
// defaults of a new analysis filled in, the contrast JSON it spells (not yet validated), and the
// writes of the form. `run=1` in the address asks for the result of these settings (a link
// reopens it); any edit drops it.
import type { CohortSchema } from '../../queries/schema.ts';
import type { SqlClient } from '../../queries/client.ts';
import { contrastJsonFromParams } from './contrast-params.ts';
import { CONTRAST_DEFAULTS, formDefaults } from './defaults.ts';
import { loadChoices, type FormChoices } from './form-choices.ts';
import { LatestAnswer } from './latest-answer.svelte.ts';

/** The address key that asks for the result of the settings. */
const RUN_KEY = 'run';

/** The part of the router a form uses (router.svelte.ts). */
export interface Address {
  readonly route: { readonly params: Readonly<Record<string, string>> };
  setParam(key: string, value: string | null): void;
}

export class AnalysisForm {
  readonly choices = new LatestAnswer<FormChoices>();
  private readonly address: Address;

  constructor(address: Address) {
    this.address = address;
  }

  /** The address bar's settings as written. */
  readonly params = $derived.by(() => this.address.route.params);

  /** The settings with the defaults of a new analysis under them (once the database's choices are known). */
  readonly values: Readonly<Record<string, string>> = $derived.by(() =>
    this.choices.value === null ? this.params : { ...formDefaults(this.choices.value), ...this.params },
  );

  /** The contrast JSON the settings spell, for the form's fields ({} while a value does not parse). */
  readonly draft: Record<string, unknown> = $derived.by(() => {
    try {
      return contrastJsonFromParams(this.values) as Record<string, unknown>;
    } catch {
      return {};
    }
  });

  /** Stages a form offers: those stored, or the default stage before the database answers. */
  readonly stages: readonly string[] = $derived.by(() => (this.choices.value?.stages.length ? this.choices.value.stages : [CONTRAST_DEFAULTS.stage]));

  /** Whether the address asks for the result of its settings. */
  readonly runAsked = $derived.by(() => this.params[RUN_KEY] === '1');

  /** Read the database's choices (call from an $effect). */
  load(db: SqlClient, schema: CohortSchema): void {
    this.choices.request(() => loadChoices(db, schema));
  }

  /** Write one setting ('' or null removes it); the address no longer names a result. */
  set(key: string, value: string | null): void {
    this.address.setParam(key, value === '' ? null : value);
    this.address.setParam(RUN_KEY, null);
  }

  /** Write the complete settings of a result just shown, and run=1 so the link reopens it. */
  showRun(params: Readonly<Record<string, string>>): void {
    for (const [k, v] of Object.entries(params)) this.address.setParam(k, v);
    this.address.setParam(RUN_KEY, '1');
  }
}
