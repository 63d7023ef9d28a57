// Browser-storage lists and the contrast in the address bar. The exclusion TSV is the one
// src/core/contrast/exclusions.ts writes and `bandwise compare --exclusions` reads; the address
// bar must give back exactly the contrast parseContrast (src/core/contrast/spec.ts) validates.
import { describe, expect, it } from 'vitest';
import { exclusionsToTsv, parseExclusionsTsv } from '../../src/core/contrast/exclusions.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { ledgerCounts, ledgerEntry } from '../../src/core/report/ledger.ts';
import {
  appendLedger,
  databaseKey,
  loadExclusions,
  loadLedger,
  saveExclusions,
  saveLedger,
  withExclusion,
  withoutExclusion,
} from '../../src/dashboard/db/local-store.ts';
import type { RunInfo } from '../../src/queries/runs.ts';
import { formatHash, parseHash } from '../../src/dashboard/routes.ts';
import { contrastFileText, contrastFromParams, paramsFromContrast } from '../../src/dashboard/analysis/contrast-params.ts';

class MemoryStore {
  map = new Map<string, string>();
  getItem(k: string): string | null {
    return this.map.get(k) ?? null;
  }
  setItem(k: string, v: string): void {
    this.map.set(k, v);
  }
}

const run = (runId: string): RunInfo => ({ runId, toolVersion: '0.1.0', parameters: {}, startedAt: null, finishedAt: null, shard: null });

describe('per-database lists in browser storage', () => {
  it('keys by run ids and file name, so two databases never share a list', () => {
    expect(databaseKey([run('b2'), run('a1')], 'http://127.0.0.1:4000/data/cohort.duckdb')).toBe('bandwise:a1+b2:cohort.duckdb');
    expect(databaseKey([run('a1')], 'other.duckdb')).not.toBe(databaseKey([run('a1')], 'cohort.duckdb'));
  });

  it('keeps one exclusion per subject × channel, round-trips through storage and TSV', () => {
    const store = new MemoryStore();
    let list = withExclusion([], { subject: 'pat07', channel: null, reason: 'mains hum' });
    list = withExclusion(list, { subject: 'ctl09', channel: 'O2', reason: 'flat' });
    list = withExclusion(list, { subject: 'pat07', channel: null, reason: 'mains hum, 50 Hz' });
    expect(list).toEqual([
      { subject: 'ctl09', channel: 'O2', reason: 'flat' },
      { subject: 'pat07', channel: null, reason: 'mains hum, 50 Hz' },
    ]);
    saveExclusions(store, 'k', list);
    expect(loadExclusions(store, 'k')).toEqual(list);
    expect(loadExclusions(store, 'other')).toEqual([]);
    expect(parseExclusionsTsv(exclusionsToTsv(list))).toEqual(list);
    expect(withoutExclusion(list, 'ctl09', 'O2')).toEqual([list[1]]);
    expect(() => withExclusion(list, { subject: ' ', channel: null, reason: 'x' })).toThrow(/needs a subject/);
    store.setItem('bad:exclusions', '{"subject":1}');
    expect(() => loadExclusions(store, 'bad')).toThrow(/bad:exclusions/);
  });

  it("keeps this browser's ledger lines; lines kept before identities were read as contrasts and counted by contrast", () => {
    const store = new MemoryStore();
    // as an earlier version stored them: a reload ran the same contrast again
    const older = [0.01, 0.01, 0.2, null].map((p, i) => ({
      time: '2026-01-01T00:00:00Z',
      contrast: { seed: i === 1 ? 0 : i },
      smallestP: p,
      n: {},
      exclusions: 0,
    }));
    store.setItem('k:ledger', JSON.stringify(older));
    const list = loadLedger(store, 'k', 'cohort.duckdb');
    expect(list[0]).toEqual({ time: '2026-01-01T00:00:00Z', database: 'cohort.duckdb', kind: 'compare', contrast: { seed: 0 }, p: 0.01, significant: true });
    expect(ledgerCounts(list, 'cohort.duckdb')).toEqual({ analyses: 3, significant: 1, byKind: { compare: 3 }, repeats: 1 });
    const entry = ledgerEntry({ kind: 'compare', contrast: { seed: 9 }, p: 0.3 }, 'cohort.duckdb', 'd', '2026-01-02T00:00:00Z');
    expect(appendLedger(store, 'k', entry)).toHaveLength(5);
    saveLedger(store, 'k', []);
    expect(loadLedger(store, 'k', 'cohort.duckdb')).toEqual([]);
  });
});

describe('contrast in the address bar', () => {
  it('gives back the same contrast through the hash, for each design', () => {
    const designs = [
      {
        design: 'groups',
        groups: ['control', 'patient'],
        stage: 'N2',
        fminHz: 0.5,
        fmaxHz: 30,
        permutations: 1000,
        channels: ['C3', 'Cz'],
        correction: 'tfce',
      },
      { design: 'paired', stages: ['N2', 'N3'], measure: 'relative', relativeRangeHz: [1, 40], statistic: 'paired-t', channelAverage: true },
      {
        design: 'covariate',
        covariate: 'age',
        nuisance: ['score'],
        measure: 'band-power',
        bands: [{ name: 'sigma', loHz: 12, hiHz: 16 }],
        seed: 7,
        clusterP: 0.01,
      },
      // multitaper spectra and an individual band
      {
        design: 'groups',
        groups: ['control', 'patient'],
        estimator: 'multitaper',
        measure: 'band-power',
        bands: [{ name: 'fast', loHz: 12, hiHz: 15 }],
        bandDefinition: 'individual',
        peakSearchHz: [11.5, 16],
        halfWidthHz: 1.25,
      },
    ];
    for (const d of designs) {
      const c = parseContrast(d);
      const hash = formatHash({ view: 'contrast', params: { ...paramsFromContrast(c), run: '1' } });
      const back = contrastFromParams(parseHash(hash).params);
      expect(back).toEqual(c);
      expect(parseContrast(JSON.parse(contrastFileText(c)))).toEqual(c);
    }
  });

  it('carries the exclusions, so another browser opening the address runs the same contrast', () => {
    const c = parseContrast({
      design: 'groups',
      groups: ['control', 'patient'],
      exclusions: [
        { subject: 'ctl 04', reason: 'movement, all night: 50% & more' },
        { subject: 'pat02', channel: 'C3', stage: 'N2', reason: 'loose electrode' },
      ],
    });
    const hash = formatHash({ view: 'contrast', params: { ...paramsFromContrast(c), run: '1' } });
    expect(contrastFromParams(parseHash(hash).params).exclusions).toEqual(c.exclusions);
    // a contrast without exclusions writes none; an address without them has none
    expect(paramsFromContrast(parseContrast({ design: 'groups', groups: ['a', 'b'] })).exclusions).toBe('');
    expect(() => contrastFromParams({ design: 'groups', groups: 'a,b', exclusions: '[{"subject":' })).toThrow(/address bar: exclusions is not valid JSON/);
  });

  it('names a bad value', () => {
    expect(() => contrastFromParams({ design: 'groups', groups: 'a,b', fminHz: 'x' })).toThrow(/fminHz=x is not a number/);
    expect(() => contrastFromParams({ design: 'groups', groups: 'a,b', fminHz: '40', fmaxHz: '30' })).toThrow(/fmaxHz/);
  });
});
