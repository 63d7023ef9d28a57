// The dashboard's adapter: Arrow → plain cells and packed Float32Array lists, on tables built with
// apache-arrow itself (the library duckdb-wasm returns results in).
import { Field, Float32, List, Table, tableFromArrays, Utf8, vectorFromArray, type RecordBatch } from 'apache-arrow';
import { describe, expect, it } from 'vitest';
import { arrowClient, listValues, tableResult } from '../../src/dashboard/db/arrow-client.ts';
import { numbers, rowsOf, texts } from '../../src/queries/client.ts';

function listTable(lists: ((number | null)[] | null)[], extra: Record<string, string[]> = {}): Table {
  const type = new List(new Field('item', new Float32(), true));
  return new Table({ ...Object.fromEntries(Object.entries(extra).map(([k, v]) => [k, vectorFromArray(v, new Utf8())])), power: vectorFromArray(lists, type) });
}

async function collect<T>(it: AsyncIterable<T>): Promise<T[]> {
  const out: T[] = [];
  for await (const x of it) out.push(x);
  return out;
}

describe('arrow client', () => {
  it('turns a table into plain cells by column, BigInt into numbers', () => {
    const t = tableFromArrays({ id: new BigInt64Array([1n, 2n]), name: ['a', 'b'], x: new Float64Array([0.5, Number.NaN]) });
    const r = tableResult(t);
    expect(r.names).toEqual(['id', 'name', 'x']);
    expect(rowsOf(r)).toEqual([
      { id: 1, name: 'a', x: 0.5 },
      { id: 2, name: 'b', x: Number.NaN },
    ]);
    expect([...numbers(r, 'x')]).toEqual([0.5, Number.NaN]);
    expect(texts(r, 'name')).toEqual(['a', 'b']);
    expect(() => texts(r, 'nope')).toThrow(/result has no column nope/);
  });

  it('refuses integers beyond 2^53 instead of rounding them', () => {
    const t = tableFromArrays({ id: new BigInt64Array([2n ** 53n + 1n]) });
    expect(() => tableResult(t)).toThrow(/column id: integer 9007199254740993 is too large/);
  });

  it('reads equal-length lists row-major as a view of the batch buffer when they hold no null', () => {
    const batch = listTable([
      [1, 2, 3],
      [4, 5, 6],
    ]).batches[0];
    const m = listValues(batch, 'power', 3);
    expect(m).toBeInstanceOf(Float32Array);
    expect([...m]).toEqual([1, 2, 3, 4, 5, 6]);
    expect(m.buffer).toBe((batch.getChild('power')!.data[0].children[0].values as Float32Array).buffer);
  });

  it('copies a batch with a null value, which becomes NaN', () => {
    expect([
      ...listValues(
        listTable([
          [5, null],
          [7, 8],
        ]).batches[0],
        'power',
        2,
      ),
    ]).toEqual([5, Number.NaN, 7, 8]);
  });

  it('fails loudly on a list of the wrong length, a null list or a missing column', () => {
    const one = (t: Table): RecordBatch => t.batches[0];
    expect(() =>
      listValues(
        one(
          listTable([
            [1, 2, 3],
            [4, 5],
          ]),
        ),
        'power',
        3,
      ),
    ).toThrow(/row 1: expected 3 values, got 2/);
    expect(() => listValues(one(listTable([[1, 2, 3], null])), 'power', 3)).toThrow(/row 1: expected 3 values, got null/);
    expect(() => listValues(one(listTable([[1]])), 'nope', 1)).toThrow(/no column nope/);
  });

  it('list reads: batch by batch with the other columns as cells, from the stream when asked and there is one', async () => {
    const t = new Table([
      ...listTable(
        [
          [1, 2],
          [3, 4],
        ],
        { id: ['a', 'b'] },
      ).batches,
      ...listTable([[5, 6]], { id: ['c'] }).batches,
    ]);
    const streamed: string[] = [];
    const client = arrowClient({
      query: async () => t,
      stream: async function* (sql) {
        streamed.push(sql);
        yield* t.batches;
      },
    });
    for (const stream of [false, true]) {
      const batches = await collect(client.listBatches('SELECT', 'power', 2, { stream }));
      expect(batches.map((b) => [b.rowCount, b.columns.id, [...b.values]])).toEqual([
        [2, ['a', 'b'], [1, 2, 3, 4]],
        [1, ['c'], [5, 6]],
      ]);
      expect(batches.every((b) => !('power' in b.columns))).toBe(true);
    }
    expect(streamed).toEqual(['SELECT']);
  });
});
