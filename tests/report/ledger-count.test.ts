// The ledger's count of distinct analyses (src/core/report/ledger.ts): the same contrast on the
// same data is one analysis however often it runs (a page reload, the command twice); exclusions,
// the split part and the data make it another; a robustness run counts its paths. The identity
// hash is FNV-1a 64, checked against its published test vectors and Python's big integers.
import { describe, expect, it } from 'vitest';
import { analysisKey, dataIdentity, fnv1a64, ledgerCounts, ledgerEntry, type LedgerEntry, type LedgerInput } from '../../src/core/report/ledger.ts';
import { methodsReport } from '../../src/core/report/index.ts';
import { runPython } from '../helpers/python.ts';
import { FACTS, fixedResults } from './inputs.ts';

const contrast = {
  design: 'groups',
  groups: ['control', 'patient'],
  stage: 'N2',
  measure: 'log-psd',
  permutations: 1000,
  seed: 1,
  exclusions: [
    { subject: 'pat07', reason: 'mains hum' },
    { subject: 'ctl09', channel: 'O2', reason: 'flat' },
  ],
};
const DATA = dataIdentity('run1', ['rec-b', 'rec-a']);
const at = (input: LedgerInput, data = DATA, database = 'cohort.duckdb') => ledgerEntry(input, database, data, '2026-01-01T00:00:00.000Z');

describe('FNV-1a 64', () => {
  it('gives the published test vectors and the values Python computes from the definition', () => {
    // test vectors of the FNV reference (Fowler, Noll & Vo; IETF draft-eastlake-fnv), from memory
    expect(fnv1a64('')).toBe('cbf29ce484222325');
    expect(fnv1a64('a')).toBe('af63dc4c8601ec8c');
    expect(fnv1a64('foobar')).toBe('85944171f73967e8');
    const texts = ['{"kind":"compare"}', 'Cz µV²/Hz – N2', 'x'.repeat(1000)];
    const py = runPython<string[]>(
      `texts = ${JSON.stringify(texts)}\n` +
        'def fnv(t):\n  h = 0xcbf29ce484222325\n  for b in t.encode("utf-8"):\n    h = ((h ^ b) * 0x100000001b3) % (1 << 64)\n  return "%016x" % h\n' +
        'print(json.dumps([fnv(t) for t in texts]))',
    );
    expect(texts.map(fnv1a64)).toEqual(py);
  });
});

describe('ledger counts', () => {
  it('counts a contrast run again (reload, same command twice) once; the repeats are stated', () => {
    const entries = [at({ kind: 'compare', contrast, p: 0.01 }), at({ kind: 'compare', contrast, p: 0.01 }), at({ kind: 'compare', contrast, p: 0.01 })];
    expect(ledgerCounts(entries, 'cohort.duckdb')).toEqual({ analyses: 1, significant: 1, byKind: { compare: 1 }, repeats: 2 });
  });

  it('takes exclusions in any order, with any reason, as the same analysis; other exclusions as another', () => {
    const reordered = { ...contrast, exclusions: [{ subject: 'ctl09', channel: 'O2', reason: 'no clean epoch' }, contrast.exclusions[0]] };
    expect(analysisKey('compare', reordered, null, DATA)).toBe(analysisKey('compare', contrast, null, DATA));
    // key order of the JSON does not matter either
    const shuffled = Object.fromEntries(Object.entries(contrast).reverse());
    expect(analysisKey('compare', shuffled, null, DATA)).toBe(analysisKey('compare', contrast, null, DATA));
    const stageOnly = { ...contrast, exclusions: [{ subject: 'pat07', stage: 'N2', reason: 'mains hum' }, contrast.exclusions[1]] };
    const entries = [
      at({ kind: 'compare', contrast, p: 0.2 }),
      at({ kind: 'compare', contrast: reordered, p: 0.2 }),
      at({ kind: 'compare', contrast: stageOnly, p: 0.03 }),
    ];
    expect(ledgerCounts(entries, 'cohort.duckdb')).toEqual({ analyses: 2, significant: 1, byKind: { compare: 2 }, repeats: 1 });
  });

  it('counts the same contrast on other data, on another split part, or as a band check as another analysis', () => {
    const other = dataIdentity('run1', ['rec-a', 'rec-b', 'rec-c']);
    expect(dataIdentity('run1', ['rec-a', 'rec-b'])).toBe(DATA);
    const entries = [
      at({ kind: 'compare', contrast, p: 0.2 }),
      at({ kind: 'compare', contrast, p: 0.2 }, other),
      at({ kind: 'compare', contrast, p: 0.2, part: 'exploration', split: { id: 's1' } }),
      at({ kind: 'band-check', contrast: { ...contrast, band: { name: 'sigma', loHz: 11, hiHz: 16 } }, p: 0.2 }),
    ];
    expect(ledgerCounts(entries, 'cohort.duckdb')).toEqual({ analyses: 4, significant: 0, byKind: { compare: 3, 'band-check': 1 }, repeats: 0 });
  });

  it('counts a robustness run as the paths it tried, each path once across runs', () => {
    const paths = (n: number) => Array.from({ length: n }, (_, i) => ({ contrast: { contrast, choices: { reference: `ref${i}` } }, p: i < 3 ? 0.01 : 0.4 }));
    const entries = [
      at({ kind: 'robustness', contrast, paths: paths(12) }),
      at({ kind: 'robustness', contrast, paths: paths(12) }),
      at({ kind: 'robustness', contrast, paths: paths(14) }),
    ];
    expect(ledgerCounts(entries, 'cohort.duckdb')).toEqual({ analyses: 14, significant: 3, byKind: { robustness: 14 }, repeats: 24 });
  });

  it('counts only analyses of the named database; reports, splits and locks are not analyses', () => {
    const entries: LedgerEntry[] = [
      at({ kind: 'compare', contrast, p: 0.01 }),
      at({ kind: 'report', contrast, p: null }),
      at({ kind: 'split', contrast: null, details: { fraction: 0.5 } }),
      at({ kind: 'compare', contrast, p: 0.01 }, DATA, 'other.duckdb'),
    ];
    expect(ledgerCounts(entries, 'cohort.duckdb')).toEqual({ analyses: 1, significant: 1, byKind: { compare: 1 }, repeats: 0 });
  });

  it('counts lines written before identities were kept by their contrast and part', () => {
    const old = (p: number): LedgerEntry => ({ time: 't', database: 'cohort.duckdb', kind: 'compare', contrast, p, significant: p < 0.05 });
    expect(ledgerCounts([old(0.01), old(0.01), { ...old(0.3), contrast: { ...contrast, seed: 2 } }], 'cohort.duckdb')).toEqual({
      analyses: 2,
      significant: 1,
      byKind: { compare: 2 },
      repeats: 1,
    });
  });

  it('the methods text states the distinct count, the repeats and the robustness paths', () => {
    const counts = { analyses: 15, significant: 4, byKind: { compare: 2, 'band-check': 1, robustness: 12 }, repeats: 3 };
    const { cmp } = fixedResults();
    const text = methodsReport(cmp, FACTS, counts).markdown;
    expect(text).toContain(
      'records 15 distinct analyses (2 compare, 1 band-check, 12 robustness paths; each path of a robustness run counts as one), of which 4 had p < 0.05.',
    );
    expect(text).toContain('3 further runs repeated an analysis already counted (same contrast, exclusions and data) and are not counted again.');
    const browser = methodsReport(cmp, FACTS, { ...counts, browserOnly: true }).markdown;
    expect(browser).toContain("This browser's own ledger of this database (the ledger beside the database could not be reached");
  });
});
