/**
 * Tables whose rows are given as a function (shared/present/build.ts `table`): the rows are
 * built when first read, once, and the table then reads, copies, serialises and clones
 * exactly as a table built with its rows (a daily fit's discounted paths, 10,000 rows, are
 * not built for a text report that does not print them).
 */
import { describe, expect, it } from 'vitest';
import { numCol, table, textCol } from '../../../shared/present/build.js';
import { presentationText } from '../../../shared/report/text.js';
import type { CellValue, Presentation } from '../../../shared/present/types.js';

const input = (rows: CellValue[][] | (() => CellValue[][])) => ({
  id: 'series',
  title: 'A series',
  columns: [textCol('period', 'Period'), numCol('x', 'x', 'value' as const)],
  rows,
  role: 'appendix' as const,
});
const data: CellValue[][] = [
  ['2020-01', 1.5],
  ['2020-02', Number.NaN],
  ['2020-03', -2],
];

describe('tables with rows built on first read', () => {
  it('builds the rows once, when read, and equals the eager table', () => {
    let calls = 0;
    const lazy = table(input(() => (calls++, data)));
    expect(calls).toBe(0);
    const eager = table(input(data));
    expect(lazy.rowKeys).toEqual(['2020-01', '2020-02', '2020-03']);
    expect(calls).toBe(1);
    expect(lazy.rows).toEqual([['2020-01', 1.5], ['2020-02', null], ['2020-03', -2]]);
    expect(lazy.rows).toBe(lazy.rows);
    expect(calls).toBe(1);
    expect(JSON.stringify(lazy)).toBe(JSON.stringify(eager));
    expect(structuredClone(lazy)).toEqual(eager);
    expect({ ...table(input(() => data)) }).toEqual(eager);
    expect(Object.keys(lazy)).toEqual(Object.keys(eager));
  });

  it('a text report does not build an appendix it does not print, and prints it when asked', () => {
    let calls = 0;
    const p: Presentation = { kind: 'fit', title: 'T', caution: 'not investment advice', header: [{ key: 'k', value: 'v' }], tables: [table(input(() => (calls++, data)))], notes: [], warnings: [] };
    expect(presentationText(p)).toMatch(/Not printed here: A series/);
    expect(calls).toBe(0);
    expect(presentationText(p, { appendix: true })).toMatch(/2020-03/);
    expect(calls).toBe(1);
  });
});
