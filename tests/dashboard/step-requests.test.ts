// The dashboard's side of the workflow steps (src/dashboard/views/workflow/step-requests.ts): the
// request it sends and how each answer of the server (src/server/workflow-api.ts) is told to the
// user. Outside source: RFC 9110 §15 (the status codes as the server uses them).
import { describe, expect, it } from 'vitest';
import { servedByServer, takeStep } from '../../src/dashboard/views/workflow/step-requests.ts';

function fakeFetch(status: number, body: string, seen: { url: string; init: RequestInit }[] = []): typeof fetch {
  return (async (url: string, init: RequestInit) => {
    seen.push({ url, init });
    return new Response(body, { status });
  }) as unknown as typeof fetch;
}

describe('workflow steps from the dashboard', () => {
  it('posts the step as JSON to the server that serves the page', async () => {
    const seen: { url: string; init: RequestInit }[] = [];
    const answer = await takeStep('lock', { contrasts: [1] }, fakeFetch(200, '{"plan":{"id":"abc"}}', seen));
    expect(answer).toEqual({ ok: true, value: { plan: { id: 'abc' } } });
    expect(seen[0].url).toBe('api/lock');
    expect(seen[0].init.method).toBe('POST');
    expect(seen[0].init.headers).toEqual({ 'Content-Type': 'application/json' });
    expect(JSON.parse(String(seen[0].init.body))).toEqual({ contrasts: [1] });
  });

  it("says the server's one-line reason, a refused page, and a server that is gone", async () => {
    expect(await takeStep('split', {}, fakeFetch(409, '{"error":"the database already has split 1a2b"}'))).toEqual({
      ok: false,
      error: 'split: the database already has split 1a2b',
    });
    expect(await takeStep('split', {}, fakeFetch(415, 'a JSON body is needed\n'))).toEqual({ ok: false, error: 'split: a JSON body is needed' });
    expect(await takeStep('confirm', {}, fakeFetch(403, ''))).toEqual({
      ok: false,
      error: 'the server refused this page: open the address bandwise dashboard printed again',
    });
    const gone = (async () => {
      throw new TypeError('Failed to fetch');
    }) as unknown as typeof fetch;
    const r = await takeStep('confirm', {}, gone);
    expect(r.ok).toBe(false);
    expect(!r.ok && r.error).toContain('is bandwise dashboard still running?');
  });

  it('offers the steps only for a database the server serves, not a picked file', () => {
    expect(servedByServer('http://127.0.0.1:4100/data/cohort.duckdb')).toBe(true);
    expect(servedByServer('cohort.duckdb')).toBe(false);
    expect(servedByServer(undefined)).toBe(false);
  });
});
