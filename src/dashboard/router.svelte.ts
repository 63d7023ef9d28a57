// The current route, kept in step with location.hash.
import { formatHash, parseHash, type Route } from './routes.ts';

export class Router {
  route: Route = $state.raw(parseHash(location.hash));

  constructor() {
    window.addEventListener('hashchange', () => {
      this.route = parseHash(location.hash);
    });
  }

  /** Go to a view (a new history entry). */
  go(view: string, params: Record<string, string> = {}): void {
    location.hash = formatHash({ view, params });
  }

  /** Change one parameter of the current view in place (no new history entry). */
  setParam(key: string, value: string | null): void {
    const params = { ...this.route.params };
    if (value === null) delete params[key];
    else params[key] = value;
    const route = { view: this.route.view, params };
    history.replaceState(null, '', formatHash(route));
    this.route = route;
  }
}

export const router = new Router();
