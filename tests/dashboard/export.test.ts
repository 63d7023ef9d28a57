// TSV export (IANA media type text/tab-separated-values: a header line of field names, one
// record per line, fields separated by TAB, no TAB inside a field) and the run-parameter listing.
import { describe, expect, it } from 'vitest';
import { flattenParameters } from '../../src/dashboard/components/run-parameters.ts';
import { fileNameFrom } from '../../src/dashboard/export/download.ts';
import { toTsv } from '../../src/dashboard/export/tsv.ts';

describe('toTsv', () => {
  it('writes a header of keys and one line per row, numbers at full precision', () => {
    const tsv = toTsv(
      [{ key: 'subject' }, { key: 'power' }, { key: 'ok' }],
      [
        { subject: 'sub-01', power: 0.1 + 0.2, ok: true },
        { subject: 'sub-02', power: null, ok: false },
      ],
    );
    expect(tsv).toBe('subject\tpower\tok\nsub-01\t0.30000000000000004\ttrue\nsub-02\t\tfalse\n');
  });

  it('never lets a field break the record structure', () => {
    const tsv = toTsv([{ key: 'message' }, { key: 'x' }], [{ message: 'bad\tvalue\r\nin field', x: Number.NaN }]);
    const lines = tsv.trimEnd().split('\n');
    expect(lines).toHaveLength(2);
    expect(lines[1].split('\t')).toEqual(['bad value in field', 'NaN']);
    expect(toTsv([{ key: 'x' }], [{ x: Infinity }, { x: -Infinity }])).toBe('x\nInf\n-Inf\n');
  });

  it('keeps columns absent from a row empty, header alone for no rows', () => {
    expect(toTsv([{ key: 'a' }, { key: 'b' }], [{ a: 1 }])).toBe('a\tb\n1\t\n');
    expect(toTsv([{ key: 'a' }], [])).toBe('a\n');
  });
});

describe('file names and run parameters', () => {
  it('derives a plain file name from a title', () => {
    expect(fileNameFrom('Group sizes by group', 'tsv')).toBe('group-sizes-by-group.tsv');
    expect(fileNameFrom('Minutes per stage (N2/N3)', 'svg')).toBe('minutes-per-stage-n2-n3.svg');
    expect(fileNameFrom('—', 'png')).toBe('export.png');
  });

  it('flattens nested parameters in their order', () => {
    expect(flattenParameters({ segment_s: 4, aperiodic: { fit_lo_hz: 2, fit_hi_hz: 30 }, references: ['recorded', 'average'], knee: null })).toEqual([
      ['segment_s', '4'],
      ['aperiodic.fit_lo_hz', '2'],
      ['aperiodic.fit_hi_hz', '30'],
      ['references', 'recorded, average'],
      ['knee', '–'],
    ]);
  });
});
