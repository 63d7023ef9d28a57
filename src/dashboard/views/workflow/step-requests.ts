// The workflow steps the dashboard takes itself (split, lock, confirm): one POST to the server that
// serves it (src/server/workflow-api.ts), which runs the command's own code on the database. The
// answer is the step's JSON, or the one-line reason it was refused.
export type WorkflowStep = 'split' | 'lock' | 'confirm';

export type StepAnswer<T> = { ok: true; value: T } | { ok: false; error: string };

/** Whether the open database is the one the server serves (a picked file has no server to write to). */
export function servedByServer(source: string | undefined): boolean {
  return source !== undefined && /^https?:\/\//.test(source);
}

export async function takeStep<T>(step: WorkflowStep, body: unknown, fetcher: typeof fetch = fetch): Promise<StepAnswer<T>> {
  let res: Response;
  try {
    res = await fetcher(`api/${step}`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body), cache: 'no-store' });
  } catch (e) {
    return { ok: false, error: `the dashboard's server did not answer (${e instanceof Error ? e.message : String(e)}); is bandwise dashboard still running?` };
  }
  if (res.status === 403) return { ok: false, error: 'the server refused this page: open the address bandwise dashboard printed again' };
  const text = await res.text();
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    value = null;
  }
  if (!res.ok) {
    const error = value !== null && typeof value === 'object' && 'error' in value ? String((value as { error: unknown }).error) : text.trim() || res.statusText;
    return { ok: false, error: `${step}: ${error}` };
  }
  return { ok: true, value: value as T };
}
