// The cluster table (src/core/contrast/cluster-table.ts) in one format for the dashboard's table,
// its TSV export and `bandwise compare --tsv`: one-point clusters above p 0.05 hidden unless asked
// for, channels front to back (10-20 layout, Jasper 1958), and a TSV that numpy reads back with the
// same values (numpy.genfromtxt with names=True: the outside reader).
import { describe, expect, it } from 'vitest';
import { clustersTsv } from '../../src/cli/compare.ts';
import type { CompareRun } from '../../src/analysis/compare-runner.ts';
import { CLUSTER_TABLE_COLUMNS, clusterTable, hiddenClustersNote } from '../../src/core/contrast/cluster-table.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { toTsv } from '../../src/dashboard/export/tsv.ts';
import { CLUSTER_COLUMNS } from '../../src/dashboard/views/contrast/columns.ts';
import { runPython } from '../helpers/python.ts';

const result = {
  contrast: parseContrast({ design: 'groups', groups: ['control', 'patient'], stage: 'N2' }),
  statistics: { channels: ['C3', 'Cz', 'Fz', 'O1', 'Pz'] },
  clusters: [
    { sign: -1, mass: -123.456789, size: 40, p: 0.00123456, fminHz: 12, fmaxHz: 15, channels: ['Pz', 'C3', 'Cz'] },
    { sign: 1, mass: 2.5, size: 1, p: 0.031, fminHz: 4, fmaxHz: 4, channels: ['O1'] },
    { sign: 1, mass: 2.2, size: 1, p: 0.41, fminHz: 7, fmaxHz: 7, channels: ['Fz'] },
    { sign: -1, mass: -2.1, size: 1, p: 0.52, fminHz: 9, fmaxHz: 9, channels: ['Cz'] },
  ],
} as unknown as CompareRun;

describe('cluster table', () => {
  it('hides one-point clusters with p > 0.05 unless asked, and says how many', () => {
    const t = clusterTable(result, { singlePoints: false });
    expect(t.rows.map((r) => r.cluster)).toEqual([1, 2]);
    expect(t.hidden).toBe(2);
    expect(hiddenClustersNote(t.hidden)).toBe('2 clusters of a single point (one channel, one frequency bin) with p > 0.05 are not listed.');
    expect(clusterTable(result, { singlePoints: true }).rows).toHaveLength(4);
    expect(t.rows[0]).toEqual({
      cluster: 1,
      sign: -1,
      direction: 'patient < control',
      fmin_hz: 12,
      fmax_hz: 15,
      // front to back: C3 before Cz (same row, left first), Pz behind them
      channels: 'C3 Cz Pz',
      mass: -123.4568,
      size: 40,
      p: 0.001235,
      significant: true,
    });
  });

  it('writes the same TSV from the command line and the dashboard export, and numpy reads its values back', () => {
    const cli = clustersTsv(result, false);
    expect(toTsv(CLUSTER_COLUMNS, clusterTable(result, { singlePoints: false }).rows)).toBe(cli);
    expect(cli.split('\n')[0]).toBe(CLUSTER_TABLE_COLUMNS.map((c) => c.key).join('\t'));
    const back = runPython<{ mass: number[]; p: number[]; size: number[] }>(
      `import io\nt = numpy.genfromtxt(io.StringIO(${JSON.stringify(cli)}), delimiter='\\t', names=True, dtype=None, encoding='utf-8')\n` +
        "print(json.dumps({'mass': [float(x) for x in t['mass']], 'p': [float(x) for x in t['p']], 'size': [int(x) for x in t['size']]}))",
    );
    expect(back).toEqual({ mass: [-123.4568, 2.5], p: [0.001235, 0.031], size: [40, 1] });
    expect(clustersTsv(result, true).trim().split('\n')).toHaveLength(5);
  });
});
