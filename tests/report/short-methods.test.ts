/**
 * The short methods paragraph (src/core/report/short-methods.ts) of the report tests' compare and
 * band check (tests/report/inputs.ts: one simulated cohort, 2 × 20 subjects, 200 permutations):
 * its length, every parameter, the real database file name, and only significant findings in the
 * results sentence.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { shortMethods, wordCount, type ReportableResult } from '../../src/core/report/index.ts';
import type { CompareResult } from '../../src/core/contrast/run.ts';
import { runPython } from '../helpers/python.ts';
import { FACTS, fixedResults, LEDGER } from './inputs.ts';

const { cmp, check } = fixedResults();
const repo = fileURLToPath(new URL('../..', import.meta.url));
const report = (...args: string[]) =>
  spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), 'report', ...args], { encoding: 'utf8' });

describe('short methods', () => {
  it('is 200–300 words for the compare and the band check (the length asked of a paste-ready paragraph)', () => {
    for (const r of [cmp, check]) {
      const n = wordCount(shortMethods(r as ReportableResult, FACTS, LEDGER));
      expect(n).toBeGreaterThanOrEqual(200);
      expect(n).toBeLessThanOrEqual(300);
    }
    // the word count counts runs of non-space characters, as word processors do (common practice)
    expect(wordCount(' 12–15 Hz,  p = 0.01\n')).toBe(5);
  });

  it('states every parameter of data, spectra and statistics, with the database file name', () => {
    const t = shortMethods(
      { ...cmp, database: { file: 'sleep-study-2026.duckdb', runId: 'r1', toolVersion: '0.1.0', ingestParameters: FACTS.ingestParameters } },
      null,
      LEDGER,
    );
    const p = FACTS.ingestParameters as { segmentS: number; overlap: number; epochS: number; rejection: { maxPeakToPeakUv: number } };
    expect(t).toContain('database sleep-study-2026.duckdb');
    expect(t).toContain(`${p.epochS}-s epochs`);
    expect(t).toContain(`${p.segmentS}-s Hann windows, ${p.overlap * 100} % overlap`);
    expect(t).toContain(`frequency resolution ${1 / p.segmentS} Hz`); // 1 / segment length (Welch 1967)
    expect(t).toContain(`above ${p.rejection.maxPeakToPeakUv} µV`);
    expect(t).toContain('(mean) over the clean epochs of stage N2, reference recorded');
    expect(t).toContain('log10 PSD (µV²/Hz) over 1–30 Hz in channel Cz');
    expect(t).toContain('(N2, patient − control)'); // design and direction
    expect(t).toContain('Welch t');
    expect(t).toContain('cluster mass');
    // the cluster-forming threshold is scipy's t quantile at the result's df (outside reference), to 3 digits
    const df = cmp.statistics.threshold.df;
    const tScipy = runPython<number>(`from scipy import stats\nprint(json.dumps(float(stats.t.isf(0.025, ${df}))))`);
    expect(t).toContain(`|t| > ${Number(tScipy.toPrecision(3))} (two-tailed p = 0.05, df = ${df})`);
    expect(t).toContain('200 permutations (seed 5)');
    expect(t).toContain('control n = 20, patient n = 20');
    expect(t).toContain('one of 7 distinct analyses');
    // with the database facts: the recordings and the share rejected (1300 of 52000 N2 channel-epochs = 2.5 %)
    const withFacts = shortMethods(cmp as ReportableResult, FACTS, LEDGER);
    expect(withFacts).toContain('40 recordings stored in the database cohort.duckdb');
    expect(withFacts).toContain('2.5 % of N2 channel-epochs');
  });

  it('names only significant clusters in the results sentence', () => {
    const extra = { sign: -1 as const, mass: -31.5, size: 4, p: 0.41, fminHz: 33.5, fmaxHz: 35, channels: ['Cz'] };
    const both: CompareResult = { ...cmp, clusters: [...cmp.clusters, extra] };
    const results = shortMethods(both, FACTS, LEDGER).split('\n\n')[1];
    expect(results).toContain(`p = ${Number(cmp.clusters[0].p.toPrecision(3))}`);
    expect(results).toContain('1 cluster reached p < 0.05');
    expect(results).not.toContain('33.5');
    expect(results).not.toContain('0.41');
    expect(results).not.toContain('control > patient');
    const none: CompareResult = { ...cmp, clusters: [extra] };
    expect(shortMethods(none, FACTS, LEDGER).split('\n\n')[1].trim()).toBe('No cluster reached p < 0.05.');
  });

  it('names only the passed tests of the band check', () => {
    const results = shortMethods(check as ReportableResult, FACTS, LEDGER).split('\n\n')[1];
    expect(results).toContain(`Verdict: ${check.verdict}.`);
    for (const h of check.family) {
      if (h.passed) expect(results).toContain(`${h.test} (p = `);
      else expect(results).not.toContain(`${h.test} (p = `);
    }
    expect(check.family.some((h) => !h.passed)).toBe(true);
  });
});

describe('bandwise report --short', () => {
  it('prints the short paragraph of a saved result on standard output, and asks for --out or --short', () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'bw-short-'));
    try {
      const saved = { ...cmp, database: { file: 'study.duckdb', runId: 'r1', toolVersion: '0.1.0', ingestParameters: FACTS.ingestParameters } };
      const file = path.join(dir, 'result.json');
      writeFileSync(file, JSON.stringify(saved));
      const r = report(file, '--short', '--no-ledger');
      expect(r.stderr).toBe('');
      expect(r.status).toBe(0);
      // the JSON round trip is the file the command reads; the paragraph is the one the dashboard shows for it
      expect(r.stdout).toBe(shortMethods(JSON.parse(JSON.stringify(saved)) as ReportableResult, null, null));
      expect(r.stdout).toContain('database study.duckdb');
      const none = report(file, '--no-ledger');
      expect(none.status).toBe(2);
      expect(none.stderr.trim()).toBe('bandwise report: give --out <file> for the methods text, or --short to print the short paragraph');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
