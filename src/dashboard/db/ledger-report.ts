// What the dashboard's analyses give the ledger (src/core/report/ledger.ts ledgerEntry adds the
// identity): a contrast, a band check (its contrast with the band, as the command line records
// it) and a robustness run (one analysis per path tried).
import type { LedgerCounts, LedgerInput } from '../../core/report/ledger.ts';
import type { CompareResult } from '../../core/contrast/run.ts';
import type { PartFields } from '../../core/confirmation/stamp.ts';
import type { BandCheckResult } from '../../core/verdict/index.ts';
import type { SpecificationCurve } from '../../core/verdict/paths.ts';
import type { Exclusion } from '../../core/contrast/data.ts';

function partOf(r: PartFields): Pick<LedgerInput, 'part' | 'split'> {
  return r.part && r.split ? { part: r.part, split: { id: r.split.id } } : {};
}

/** A contrast: its contrast JSON (exclusions included) and smallest cluster (or TFCE) p. */
export function contrastLedgerInput(r: CompareResult & PartFields, smallestP: number | null): LedgerInput {
  return { kind: 'compare', contrast: r.contrast, p: smallestP, ...partOf(r) };
}

/** A band check: its contrast with the band, the verdict's smallest adjusted p (as the command line). */
export function bandCheckLedgerInput(r: BandCheckResult & PartFields): LedgerInput {
  return { kind: 'band-check', contrast: { ...r.contrast, band: r.band }, p: r.p, ...partOf(r) };
}

/**
 * A robustness run: each path is an analysis of its own (the contrast with its exclusions, the
 * band, the test and the path's choices); the run's p is its smallest path p.
 */
export function robustnessLedgerInput(curve: SpecificationCurve & PartFields, exclusions: readonly Exclusion[]): LedgerInput {
  const contrast = { ...curve.contrast, exclusions: [...exclusions] };
  const at = { contrast, band: curve.band, test: curve.test };
  return {
    kind: 'robustness',
    contrast: { ...at, paths: curve.nPaths },
    p: curve.paths.length > 0 ? Math.min(...curve.paths.map((x) => x.p)) : null,
    paths: curve.paths.map(({ measure, denominatorHz, reference, averaging, estimator, summary, fitRangeHz, band, bandDefinition, decision, p }) => ({
      contrast: { ...at, choices: { measure, denominatorHz, reference, averaging, estimator, summary, fitRangeHz, band, bandDefinition, decision } },
      p,
    })),
    ...partOf(curve),
  };
}

/** The count every view shows: distinct analyses by kind, significant ones, and which ledger holds them. */
export function ledgerLine(c: LedgerCounts, shared: boolean): string {
  const kinds = Object.entries(c.byKind)
    .map(([k, v]) => `${v} ${k === 'robustness' ? 'robustness paths' : k}`)
    .join(', ');
  const where = shared
    ? 'ledger beside the database, shared with the command line'
    : "this browser's own ledger: the one beside the database cannot be reached";
  return `Distinct analyses run on this database: ${c.analyses}${kinds ? ` (${kinds})` : ''}, significant: ${c.significant} (${where})`;
}
