// Arrow → plain rows and typed arrays, on tables built with apache-arrow itself (the library
// duckdb-wasm returns results in).
import { Field, Float32, List, Table, tableFromArrays, vectorFromArray } from 'apache-arrow';
import { describe, expect, it } from 'vitest';
import { listColumnRowsInto, listColumnToMatrix, numberColumn, stringColumn, tableToRows } from '../../src/dashboard/db/arrow-rows.ts';

function listTable(lists: ((number | null)[] | null)[]): Table {
  const type = new List(new Field('item', new Float32(), true));
  return new Table({ power: vectorFromArray(lists, type) });
}

describe('arrow rows', () => {
  it('turns a table into plain rows, BigInt into numbers', () => {
    const t = tableFromArrays({ id: new BigInt64Array([1n, 2n]), name: ['a', 'b'], x: new Float64Array([0.5, Number.NaN]) });
    expect(tableToRows(t)).toEqual([
      { id: 1, name: 'a', x: 0.5 },
      { id: 2, name: 'b', x: Number.NaN },
    ]);
    expect([...numberColumn(t, 'x')]).toEqual([0.5, Number.NaN]);
    expect(stringColumn(t, 'name')).toEqual(['a', 'b']);
  });

  it('refuses integers beyond 2^53 instead of rounding them', () => {
    const t = tableFromArrays({ id: new BigInt64Array([2n ** 53n + 1n]) });
    expect(() => tableToRows(t)).toThrow(/column id: integer 9007199254740993 is too large/);
  });

  it('packs equal-length lists into one row-major Float32Array', () => {
    const m = listColumnToMatrix(listTable([[1, 2, 3], [4, 5, 6]]), 'power', 3);
    expect(m).toBeInstanceOf(Float32Array);
    expect([...m]).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it('fails loudly on a list of the wrong length, a null list or a missing column', () => {
    expect(() => listColumnToMatrix(listTable([[1, 2, 3], [4, 5]]), 'power', 3)).toThrow(/row 1: expected 3 values, got 2/);
    expect(() => listColumnToMatrix(listTable([[1, 2, 3], null]), 'power', 3)).toThrow(/row 1: expected 3 values, got null/);
    expect(() => listColumnToMatrix(listTable([]), 'nope', 3)).toThrow(/no column nope/);
  });

  it('copies each list of a batch into its row place, in any order, over several batches', () => {
    const t = new Table([
      ...listTable([[1, 2], [3, 4]]).batches,
      ...listTable([[5, null], [7, 8]]).batches,
    ]);
    expect(t.batches).toHaveLength(2);
    const out = new Float32Array(8);
    const place = [2, 0, 3, 1];
    listColumnRowsInto(t, 'power', 2, (i) => place[i], out);
    expect([...out]).toEqual([3, 4, 7, 8, 1, 2, 5, Number.NaN]);
    for (const [i, batch] of t.batches.entries()) listColumnRowsInto(batch, 'power', 2, (r) => 3 - (2 * i + r), out);
    expect([...out]).toEqual([7, 8, 5, Number.NaN, 3, 4, 1, 2]);
    expect(() => listColumnRowsInto(listTable([[1, 2], [3]]), 'power', 2, (i) => i, out)).toThrow(/row 1: expected 2 values, got 1/);
    expect(() => listColumnRowsInto(listTable([null]), 'power', 2, (i) => i, out)).toThrow(/row 0: expected 2 values, got null/);
  });
});
