import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseShard, selectShard, ShardError } from '../../ingest/cohort/shard.ts';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { runPython } from '../helpers/python.ts';

const rec = (subject: string, session: string | null, file: string, row = 1): CohortRecording => ({
  row,
  subject,
  session,
  group: null,
  recordingPath: `/cohort/${file}`,
  scoringPath: null,
  covariates: {},
});

describe('parseShard', () => {
  it('reads K/N with K from 1 to N', () => {
    expect(parseShard('2/4')).toEqual({ k: 2, n: 4 });
    expect(parseShard(' 1 / 1 ')).toEqual({ k: 1, n: 1 });
    expect(parseShard('4/4')).toEqual({ k: 4, n: 4 });
  });

  it('refuses K outside 1..N, N < 1 and non-numbers with a message saying what is expected', () => {
    expect(() => parseShard('0/4')).toThrow(ShardError);
    expect(() => parseShard('0/4')).toThrow(/K must be a whole number from 1 to N = 4, got 0/);
    expect(() => parseShard('5/4')).toThrow(/got 5/);
    expect(() => parseShard('1/0')).toThrow(/shard count N must be a whole number ≥ 1, got 0/);
    expect(() => parseShard('a/4')).toThrow(/expected K\/N/);
    expect(() => parseShard('1.5/4')).toThrow(/expected K\/N/);
    expect(() => parseShard('-1/4')).toThrow(/expected K\/N/);
    expect(() => selectShard([], 3, 2)).toThrow(/K must be a whole number from 1 to N = 2, got 3/);
    expect(() => selectShard([], 1, 1.5)).toThrow(/shard count/);
  });
});

describe('selectShard', () => {
  it('assigns sorted index i to shard (i mod N) + 1, whatever the table order (checked against Python sorted())', () => {
    const recs = [
      rec('s10', null, 'b.edf'),
      rec('s02', 'night2', 'c.edf'),
      rec('s02', 'night1', 'd.edf'),
      rec('s02', null, 'z.edf'),
      rec('s01', null, 'y.edf'),
      rec('S01', null, 'x.edf'),
      rec('s10', null, 'a.edf'),
      rec('s03', 'n1', 'e.edf'),
    ];
    // Outside reference: Python's tuple ordering (code-point order; equal to UTF-16 order for these ASCII names),
    // with a missing session sorting first ((0, '') < (1, session)).
    const py = runPython<string[][]>(`
recs = json.loads(${JSON.stringify(JSON.stringify(recs.map((r) => [r.subject, r.session, r.recordingPath])))})
order = sorted(recs, key=lambda r: (r[0], (0, '') if r[1] is None else (1, r[1]), r[2]))
n = 3
print(json.dumps([[r[2] for i, r in enumerate(order) if i % n == k - 1] for k in range(1, n + 1)]))
`);
    const ours = [1, 2, 3].map((k) => selectShard(recs, k, 3).map((r) => r.recordingPath));
    expect(ours).toEqual(py);
    // the uppercase subject sorts first in code-unit order ('S' 0x53 < 's' 0x73)
    expect(ours[0][0]).toBe('/cohort/x.edf');
  });

  it('property: the N shards are disjoint, cover the cohort, differ in size by ≤ 1 and ignore the row order', () => {
    const recording = fc.record({
      subject: fc.stringMatching(/^[a-zA-Z0-9]{1,4}$/),
      session: fc.option(fc.stringMatching(/^[a-z0-9]{1,3}$/), { nil: null }),
      file: fc.stringMatching(/^[a-z]{1,5}$/),
    });
    fc.assert(
      fc.property(
        fc.uniqueArray(recording, { maxLength: 40, selector: (r) => `${r.subject}|${r.session}|${r.file}` }),
        fc.integer({ min: 1, max: 7 }),
        fc.integer(),
        (rs, n, seed) => {
          const recs = rs.map((r, i) => rec(r.subject, r.session, r.file, i + 1));
          const shuffled = [...recs].sort((a, b) => ((a.row * 7919 + seed) % 101) - ((b.row * 7919 + seed) % 101));
          const shards = Array.from({ length: n }, (_, k) => selectShard(recs, k + 1, n));
          const again = Array.from({ length: n }, (_, k) => selectShard(shuffled, k + 1, n));
          const rows = shards
            .flat()
            .map((r) => r.row)
            .sort((a, b) => a - b);
          expect(rows).toEqual(recs.map((r) => r.row));
          const sizes = shards.map((s) => s.length);
          expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
          expect(again.map((s) => s.map((r) => r.row))).toEqual(shards.map((s) => s.map((r) => r.row)));
        },
      ),
      { numRuns: 300 },
    );
  });
});
