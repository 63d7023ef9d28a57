// The methods report's result survives a page reload: LastResult saves it in the tab's session
// storage under its contrast's hash, and a new LastResult (what a reload builds) reads it back;
// the short methods paragraph shown for it, and copied by its button, is the same text.
// Size: the report tests' compare (2 × 20 simulated subjects, 200 permutations).
import { fireEvent, render, screen } from '@testing-library/svelte';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { shortMethods, type ReportableResult } from '../../src/core/report/index.ts';
import { LAST_RESULT_KEY, LastResult, resultKey, textHash } from '../../src/dashboard/views/report/last-result.svelte.ts';
import ShortMethods from '../../src/dashboard/views/report/ShortMethods.svelte';
import { FACTS, fixedResults, LEDGER } from '../report/inputs.ts';

const { cmp, check } = fixedResults();
const saved: ReportableResult = {
  ...cmp,
  database: { file: 'study.duckdb', runId: FACTS.runId, toolVersion: '0.1.0', ingestParameters: FACTS.ingestParameters },
};

describe('result and methods text across a reload', () => {
  beforeEach(() => sessionStorage.clear());
  afterEach(() => vi.restoreAllMocks());

  it('reads the last result back after a reload and shows the same short methods text, which the button copies', async () => {
    new LastResult(sessionStorage).remember(saved);
    const reloaded = new LastResult(sessionStorage);
    expect(reloaded.origin).toBe('session');
    expect(reloaded.result).toEqual(JSON.parse(JSON.stringify(saved)));
    const before = shortMethods(saved, FACTS, LEDGER);
    const after = shortMethods(reloaded.result!, FACTS, LEDGER);
    expect(after).toBe(before);

    const writes: string[] = [];
    Object.defineProperty(navigator, 'clipboard', { value: { writeText: async (t: string) => void writes.push(t) }, configurable: true });
    render(ShortMethods, { text: after });
    // shown as its paragraphs: the methods, then the results sentence
    const shown = [...screen.getByTestId('short-methods-text').querySelectorAll('p')].map((p) => p.textContent);
    expect(shown).toEqual(before.trim().split('\n\n'));
    expect(screen.getByRole('heading').textContent).toMatch(/^Short methods \(\d+ words\)$/);
    await fireEvent.click(screen.getByTestId('copy-short-methods'));
    expect(writes).toEqual([before]);
    expect((await screen.findByRole('status')).textContent).toBe('Copied.');
  });

  it('keeps one result, under the hash of its contrast, and drops a damaged entry', () => {
    const store = new LastResult(sessionStorage);
    store.remember(saved);
    expect(sessionStorage.getItem(resultKey(saved))).not.toBeNull();
    store.remember(check as ReportableResult, 'file');
    expect(sessionStorage.getItem(resultKey(saved))).toBeNull();
    expect(JSON.parse(sessionStorage.getItem(LAST_RESULT_KEY)!)).toEqual({ key: resultKey(check as ReportableResult), origin: 'file' });
    expect(new LastResult(sessionStorage).result?.kind).toBe('band-check');
    sessionStorage.setItem(resultKey(check as ReportableResult), '{not json');
    expect(new LastResult(sessionStorage).result).toBeNull();
    expect(sessionStorage.getItem(LAST_RESULT_KEY)).toBeNull();
  });

  it('hashes with 32-bit FNV-1a (published test vectors: "" → 811c9dc5, "a" → e40c292c, "foobar" → bf9cf968)', () => {
    expect(textHash('')).toBe('811c9dc5');
    expect(textHash('a')).toBe('e40c292c');
    expect(textHash('foobar')).toBe('bf9cf968');
  });
});
