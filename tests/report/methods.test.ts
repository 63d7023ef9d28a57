/**
 * The methods report: the text for a fixed band check and a fixed compare equals the stored,
 * reviewed texts (numbers included); every key and value of the contrast appears in it; the
 * parameters JSON carries the same numbers; bad ingest parameters fail naming the field.
 * The numbers themselves come from the engine checked against numpy/scipy in
 * tests/verdict/validation.test.ts; the rejected shares below are recomputed by hand.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { methodsReport, ingestParameterFacts, ReportInputError } from '../../src/core/report/index.ts';
import { CONTRAST_JSON, FACTS, LEDGER, fixedResults } from './inputs.ts';
import { compare } from '../../src/core/contrast/run.ts';
import { bandCheck } from '../../src/core/verdict/index.ts';
import { FIT_RANGE_HZ, simulateCohort } from '../verdict/cohorts.ts';

const { contrast, check, cmp } = fixedResults();
const expected = (name: string) => readFileSync(new URL(`./${name}`, import.meta.url), 'utf8');

describe('methods report', () => {
  it('equals the stored text for the fixed band check and compare', () => {
    expect(methodsReport(check, FACTS, LEDGER).markdown).toBe(expected('expected-band-check.md'));
    expect(methodsReport(cmp, FACTS, LEDGER).markdown).toBe(expected('expected-compare.md'));
  });

  it('says where the channel neighbours of a spatial cluster test came from', () => {
    // the fixed compare has no channel neighbours; the same result with a two-channel graph
    const spatial = (neighbours: 'table' | 'positions') =>
      methodsReport({ ...cmp, statistics: { ...cmp.statistics, channelNeighbours: [[1], [0]] }, channelLayout: { neighbours, positions: [] } }, FACTS, LEDGER)
        .markdown;
    expect(spatial('table')).toContain('and neighbouring channels (the neighbour table given with the contrast);');
    expect(spatial('positions')).toContain(
      "and neighbouring channels (Delaunay triangulation of the channels' electrode positions (from the recordings' positions files, else the idealised 10-10 positions of their names) projected onto a disk, edges longer than twice the median edge dropped);",
    );
    expect(methodsReport(cmp, FACTS, LEDGER).markdown).not.toContain('neighbouring channels');
  });

  it('states every parameter of the contrast JSON', () => {
    for (const r of [check, cmp]) {
      const text = methodsReport(r, FACTS, LEDGER).markdown;
      for (const [key, value] of Object.entries(contrast)) {
        expect(text, key).toContain(`- ${key}: ${typeof value === 'object' ? JSON.stringify(value) : String(value)}`);
      }
      // the values of the JSON as given also appear in the prose
      for (const v of [
        CONTRAST_JSON.stage,
        CONTRAST_JSON.groups[0],
        CONTRAST_JSON.groups[1],
        `${CONTRAST_JSON.fminHz}–${CONTRAST_JSON.fmaxHz} Hz`,
        `seed ${CONTRAST_JSON.seed}`,
        `${CONTRAST_JSON.permutations} random`,
      ])
        expect(text).toContain(v);
    }
  });

  it('states the spectral, rejection and ledger facts with the shares computed from the counts', () => {
    const text = methodsReport(check, FACTS, LEDGER).markdown;
    // 1300/52000 = 2.5 %; all stages (1300 + 260)/(52000 + 26000) = 2.0 % (by hand)
    // chance per outlier rule 2Φ(−3.5)·52000 = 4.6526e-4·52000 = 24.2 (scipy.stats.norm.sf, by hand)
    expect(text).toContain(
      'In N2, 1300 of 52000 channel-epochs (2.5 %) were rejected (amplitude 400, broadband-outlier 700, muscle-outlier 200; chance under Gaussian scatter: at most 24.2 per outlier rule)',
    );
    expect(text).toContain('each outlier rule is expected to remove 0.047 % of clean channel-epochs, the two together at most 0.093 %');
    expect(text).toContain('1560 of 78000 channel-epochs (2.0 %)');
    // frequency resolution 1/segment length (Welch 1967): 1/4 s = 0.25 Hz
    expect(text).toContain('4-s Hann-windowed segments overlapping by 50 %');
    expect(text).toContain('the frequency resolution is 0.25 Hz');
    expect(text).toContain('records 7 distinct analyses (5 compare, 2 band-check; each path of a robustness run counts as one), of which 3 had p < 0.05');
    expect(text).toContain('fitted over 1–40 Hz for every subject');
    expect(text).toContain(check.sentence);
    expect(text).toContain('research tool');
  });

  it('states the warnings kept per step and how many recordings are partial, counted from the facts', () => {
    const text = methodsReport(cmp, FACTS, LEDGER).markdown;
    // 2 + 3 + 4 = 9 warnings; partial-data 1 + partial-scoring 2 = 3 of 40 (by hand)
    expect(text).toContain('The ingest kept 9 warnings (by step: channels 2, read 3, scoring 4;');
    expect(text).toContain('Of the 40 recordings, 3 are partial (partial-data 1, partial-scoring 2;');
    expect(text).toContain('and 2 are complete with warnings.');
    const clean = methodsReport(cmp, { ...FACTS, warnings: { byStep: {}, recordingsByStatus: { ok: 40 } } }, LEDGER).markdown;
    expect(clean).toContain('The ingest kept no warnings: every recording was read whole, with its scoring complete.');
    expect(clean).not.toContain('Nyquist');
    // a 20-Hz channel (Nyquist 10 Hz, below the stored 45 Hz) is stored to its own Nyquist frequency
    const slow = methodsReport(cmp, { ...FACTS, samplingRatesHz: [20, 256] }, LEDGER).markdown;
    expect(slow).toContain('spectra were stored from 0 to 45 Hz, each channel at most up to its own Nyquist frequency (half its sampling rate).');
  });

  it('exports the parameters as JSON with the same numbers', () => {
    const p = methodsReport(check, FACTS, LEDGER).parameters;
    expect(p.kind).toBe('band-check');
    expect(p.frequencyResolutionHz).toBe(0.25);
    expect(p.ingest!.rejection.maxPeakToPeakUv).toBe(500);
    expect(p.statistics.permutations).toBe(200);
    expect(p.statistics.seed).toBe(5);
    expect(p.ledger).toEqual(LEDGER);
    expect(p.contrast).toEqual(contrast);
    expect(JSON.parse(JSON.stringify(p))).toEqual(p);
  });

  it('names the multitaper estimate with its parameters and source when the analysis used it, and refuses it without them', () => {
    const mtContrast = { ...contrast, estimator: 'multitaper' as const };
    const mtFacts = { ...FACTS, ingestParameters: { ...(FACTS.ingestParameters as Record<string, unknown>), multitaper: { nw: 2, k: 3 } } };
    const text = methodsReport(compare(mtContrast, simulateCohort('both', 3)), mtFacts, LEDGER).markdown;
    // 2W = 2NW/T = 2·2/4 s = 1 Hz (Thomson 1982; by hand)
    expect(text).toContain("multitaper estimate stored beside Welch's (Thomson 1982)");
    expect(text).toContain('K = 3 discrete prolate spheroidal (Slepian) tapers with time-half-bandwidth NW = 2');
    expect(text).toContain('a frequency resolution 2W = 2NW/T = 1 Hz');
    expect(text).toContain('Thomson, D. J. (1982). Spectrum estimation and harmonic analysis. Proceedings of the IEEE, 70(9), 1055–1096.');
    // a Welch analysis does not mention it
    expect(methodsReport(cmp, mtFacts, LEDGER).markdown).not.toContain('Thomson');
    expect(() => methodsReport(compare(mtContrast, simulateCohort('both', 3)), FACTS, LEDGER)).toThrow(/multitaper NW and K/);
  });

  it('states the individual band rule and the subjects without a peak in a band check with individual bands', () => {
    const ind = bandCheck(
      { ...contrast, bandDefinition: 'individual', peakSearchHz: [11.8, 16], halfWidthHz: 1.5 },
      { name: 'sigma', loHz: 12, hiHz: 16 },
      simulateCohort('both', 3),
      { fitRangeHz: FIT_RANGE_HZ },
    );
    const text = methodsReport(ind, FACTS, LEDGER).markdown;
    expect(text).toContain("The band was individual: centred on each subject's own fitted peak in 11.8–16 Hz");
    expect(text).toContain('with a half-width of 1.5 Hz');
    expect(text).toMatch(/\d+ of 40 subject-conditions have a fitted peak in 11.8–16 Hz/);
  });

  it('fails on ingest parameters without a field, naming it', () => {
    const broken = { ...(FACTS.ingestParameters as Record<string, unknown>), segmentS: undefined };
    expect(() => ingestParameterFacts(broken)).toThrow(ReportInputError);
    expect(() => ingestParameterFacts(broken)).toThrow(/segmentS/);
  });
});
