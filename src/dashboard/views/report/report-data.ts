// The report view's inputs and display: a result JSON (written by the band check view, `bandwise
// compare` or `bandwise band-check`) checked as the command line's report reads it, and the
// methods Markdown as blocks for the screen (the exported file is the Markdown itself).
import type { ReportableResult } from '../../../core/report/index.ts';

export class ResultFileError extends Error {
  override name = 'ResultFileError';
}

/** A compare or band-check result from JSON text; fails naming the file and the problem. */
export function parseResultJson(text: string, fileName: string): ReportableResult {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw new ResultFileError(`${fileName}: cannot be read as JSON (${(e as Error).message})`);
  }
  const kind = (value as { kind?: unknown } | null)?.kind;
  if (kind !== 'compare' && kind !== 'band-check')
    throw new ResultFileError(`${fileName}: "kind" is ${JSON.stringify(kind)}, expected "compare" or "band-check" (a result of a contrast or a band check)`);
  const c = (value as { contrast?: unknown }).contrast;
  if (c === null || typeof c !== 'object') throw new ResultFileError(`${fileName}: no "contrast" object`);
  if (!Array.isArray((value as { exclusions?: unknown }).exclusions)) throw new ResultFileError(`${fileName}: no "exclusions" list`);
  return value as ReportableResult;
}

export type Block = { kind: 'h1' | 'h2' | 'p'; text: string } | { kind: 'ul'; items: string[] };

/** Markdown emphasis markers taken out for the screen. */
const plain = (s: string) => s.replace(/\*\*([^*]+)\*\*/g, '$1').replace(/(^|\s)\*([^*]+)\*(?=\s|$|[.,;])/g, '$1$2');

/** The report's Markdown (headings, paragraphs, "- " lists; what methodsReport writes) as blocks. */
export function markdownBlocks(markdown: string): Block[] {
  return markdown
    .split(/\n{2,}/)
    .map((b) => b.trim())
    .filter(Boolean)
    .map((b): Block => {
      if (b.startsWith('## ')) return { kind: 'h2', text: plain(b.slice(3)) };
      if (b.startsWith('# ')) return { kind: 'h1', text: plain(b.slice(2)) };
      const lines = b.split('\n');
      if (lines.every((l) => l.startsWith('- '))) return { kind: 'ul', items: lines.map((l) => plain(l.slice(2))) };
      return { kind: 'p', text: plain(b) };
    });
}

/** File stem of a result's exports: "methods-band-check-sigma", "methods-compare-N2". */
export function reportFileStem(r: ReportableResult): string {
  const what = r.kind === 'band-check' ? (r as { band: { name: string } }).band.name : r.contrast.stage;
  return `methods-${r.kind}-${what}`.replace(/[^A-Za-z0-9-]+/g, '-');
}
