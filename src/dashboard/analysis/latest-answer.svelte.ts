// The answer of an async load that is asked again whenever its inputs change (the database's form
// choices, the fit ranges stored for a stage): only the latest request's answer or error is kept,
// so a slow older request that settles after a newer one cannot show an older answer.
import { errorText } from './error-text.ts';

export class LatestAnswer<T> {
  value: T | null = $state.raw(null);
  error: string | null = $state(null);
  private latest = 0;

  /** Start a load; until it answers the value is null. */
  request(load: () => Promise<T>): void {
    const id = ++this.latest;
    this.value = null;
    this.error = null;
    load().then(
      (v) => {
        if (id === this.latest) this.value = v;
      },
      (err: unknown) => {
        if (id === this.latest) this.error = errorText(err);
      },
    );
  }
}
